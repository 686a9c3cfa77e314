package org.pairpulse.sketch.stats;

import java.util.Objects;

/**
 * The association measures of one pair {a, b} in one horizon, computed from its
 * {@link PairCounts}. Immutable; {@link #of} is a pure function and never throws on valid counts.
 *
 * <h2>Formulas</h2>
 * With N baskets, n_a, n_b, n_ab the (clamped, see below) point counts:
 * <pre>
 *   support        = n_ab / N
 *   confidenceAB   = n_ab / n_a                         (a ⇒ b; confidenceBA = n_ab / n_b)
 *   lift           = N·n_ab / (n_a·n_b)                 (1 = independence)
 *   leverage       = n_ab/N − (n_a/N)(n_b/N)            [2]
 *   convictionAB   = (1 − n_b/N) / (1 − confidenceAB)   [3]  (convictionBA likewise)
 *   kulczynski     = (confidenceAB + confidenceBA) / 2  [4]
 *   imbalanceRatio = |n_a − n_b| / (n_a + n_b − n_ab)   [4]
 *   shrunkLift     = (n_ab + k) / (E + k),  E = n_a·n_b/N, k = shrinkPriorBaskets   [5]
 *   gSquared       = 2 Σ k_ij ln(k_ij / e_ij) on the 2×2 table   [1], see {@link TwoByTwoTable}
 *   chiSquare      = Pearson's χ² of the same table, no continuity correction
 *   gSquaredPValue = P(χ²₁ ≥ G²) = erfc(√(G²/2))
 * </pre>
 * The lift interval [{@link #liftLower()}, {@link #liftUpper()}] combines the sketch bounds and
 * a log-scale sampling interval; its construction is documented on {@link LiftInterval}.
 *
 * <p>The shrunk lift is the posterior mean of the rate ratio λ when n_ab ~ Poisson(λ·E) and λ has
 * a Gamma(k, k) prior (mean 1, worth k baskets): the gamma–Poisson shrinker of [5]. It lies
 * between 1 and the lift, and moves toward the lift as evidence grows.
 *
 * <h2>Sketch overcounting</h2>
 * Point values are clamped before use: n_a, n_b to at most N, n_ab to at most min(n_a, n_b), and
 * the 2×2 table's fourth cell at 0. Bounds are clamped the same way inside the interval.
 *
 * <h2>Scale</h2>
 * support, confidence, lift, leverage, conviction, Kulczynski and the imbalance ratio are
 * invariant to multiplying every count by a constant, so forward-decayed counts can be used at any
 * landmark. G², χ², the p-value, the lift interval and the shrunk lift are <em>not</em>: they read
 * counts as baskets of evidence (G² and χ² grow linearly with the scale).
 *
 * <h2>Degenerate inputs</h2>
 * Ratios with a zero denominator are NaN: with N = 0 everything but the tests is NaN; with
 * n_a = 0 confidenceAB, lift, the interval, Kulczynski and convictionAB are NaN (the shrunk lift
 * is then k/k = 1, the prior mean). Conviction is
 * {@code +∞} when the confidence is 1 and n_b &lt; N, and NaN when n_b = N (0/0: b is in every
 * basket). The lift's upper bound may be {@code +∞} when the marginals' lower bounds are 0. G² and
 * χ² are 0 (p-value 1) when a table margin is 0. Flags compare with NaN as false.
 *
 * <h2>References</h2>
 * <ol>
 *   <li>T. Dunning, "Accurate methods for the statistics of surprise and coincidence",
 *       Computational Linguistics 19(1), 1993.</li>
 *   <li>G. Piatetsky-Shapiro, "Discovery, analysis, and presentation of strong rules", in
 *       Knowledge Discovery in Databases, AAAI/MIT Press, 1991.</li>
 *   <li>S. Brin, R. Motwani, J. D. Ullman, S. Tsur, "Dynamic itemset counting and implication
 *       rules for market basket data", SIGMOD 1997.</li>
 *   <li>T. Wu, Y. Chen, J. Han, "Re-examination of interestingness measures in pattern mining: a
 *       unified framework", Data Mining and Knowledge Discovery 21(3), 2010.</li>
 *   <li>W. DuMouchel, "Bayesian data mining in large frequency tables, with an application to the
 *       FDA spontaneous reporting system", The American Statistician 53(3), 1999.</li>
 * </ol>
 *
 * <p>Thread safety: instances are immutable and safe to share.
 */
public final class PairMeasures {

  private final double support;
  private final double confidenceAB;
  private final double confidenceBA;
  private final double lift;
  private final double liftLower;
  private final double liftUpper;
  private final double shrunkLift;
  private final double leverage;
  private final double convictionAB;
  private final double convictionBA;
  private final double kulczynski;
  private final double imbalanceRatio;
  private final double gSquared;
  private final double signedRootGSquared;
  private final double gSquaredPValue;
  private final double chiSquare;
  private final boolean bundle;
  private final boolean repelling;

  private PairMeasures(PairCounts counts, MeasureSettings settings) {
    ClampedCounts point = ClampedCounts.pointValuesOf(counts);
    double baskets = point.baskets();
    double supportA = point.countA() / baskets;
    double supportB = point.countB() / baskets;

    support = point.countAB() / baskets;
    confidenceAB = point.countAB() / point.countA();
    confidenceBA = point.countAB() / point.countB();
    lift = point.lift();
    leverage = support - supportA * supportB;
    convictionAB = conviction(confidenceAB, supportB);
    convictionBA = conviction(confidenceBA, supportA);
    kulczynski = (confidenceAB + confidenceBA) / 2.0;
    imbalanceRatio = Math.abs(point.countA() - point.countB())
        / (point.countA() + point.countB() - point.countAB());
    double prior = settings.shrinkPriorBaskets();
    shrunkLift = (point.countAB() + prior) / (point.expectedCountAB() + prior);

    LiftInterval interval = LiftInterval.of(counts, point, settings);
    liftLower = interval.lower();
    liftUpper = interval.upper();

    TwoByTwoTable table = TwoByTwoTable.of(point);
    gSquared = table.gSquared();
    signedRootGSquared = table.signedRootGSquared();
    gSquaredPValue = TwoByTwoTable.chiSquareOneDfPValue(gSquared);
    chiSquare = table.chiSquare();

    bundle = confidenceAB >= settings.bundleConfidence() && confidenceBA >= settings.bundleConfidence();
    repelling = liftUpper < 1.0;
  }

  /** The measures of {@code counts} under {@code settings}. */
  public static PairMeasures of(PairCounts counts, MeasureSettings settings) {
    return new PairMeasures(Objects.requireNonNull(counts, "counts"), Objects.requireNonNull(settings, "settings"));
  }

  /** The measures of {@code counts} under {@link MeasureSettings#defaults()}. */
  public static PairMeasures of(PairCounts counts) {
    return of(counts, MeasureSettings.defaults());
  }

  /** (1 − support(consequent)) / (1 − confidence); +∞ at confidence 1, NaN at 0/0. */
  private static double conviction(double confidence, double consequentSupport) {
    double numerator = 1.0 - consequentSupport;
    double denominator = 1.0 - confidence;
    if (denominator == 0.0) {
      return numerator > 0.0 ? Double.POSITIVE_INFINITY : Double.NaN;
    }
    return numerator / denominator;
  }

  /** n_ab / N. */
  public double support() {
    return support;
  }

  /** Confidence of a ⇒ b: n_ab / n_a. */
  public double confidenceAB() {
    return confidenceAB;
  }

  /** Confidence of b ⇒ a: n_ab / n_b. */
  public double confidenceBA() {
    return confidenceBA;
  }

  /** N·n_ab / (n_a·n_b). */
  public double lift() {
    return lift;
  }

  /** Lower end of the two-sided lift interval (sketch and sampling error). */
  public double liftLower() {
    return liftLower;
  }

  /** Upper end of the two-sided lift interval (sketch and sampling error); may be +∞. */
  public double liftUpper() {
    return liftUpper;
  }

  /** (n_ab + k) / (n_a·n_b/N + k): lift pulled toward 1 when evidence is thin. */
  public double shrunkLift() {
    return shrunkLift;
  }

  /** n_ab/N − (n_a/N)(n_b/N). */
  public double leverage() {
    return leverage;
  }

  /** Conviction of a ⇒ b: (1 − n_b/N) / (1 − confidenceAB); +∞ when confidenceAB is 1. */
  public double convictionAB() {
    return convictionAB;
  }

  /** Conviction of b ⇒ a: (1 − n_a/N) / (1 − confidenceBA); +∞ when confidenceBA is 1. */
  public double convictionBA() {
    return convictionBA;
  }

  /** Mean of the two confidences (null-invariant). */
  public double kulczynski() {
    return kulczynski;
  }

  /** |n_a − n_b| / (n_a + n_b − n_ab): 0 balanced, toward 1 lopsided. */
  public double imbalanceRatio() {
    return imbalanceRatio;
  }

  /** Dunning's G² of the 2×2 table. */
  public double gSquared() {
    return gSquared;
  }

  /** √G², positive when n_ab is above n_a·n_b/N and negative when below. */
  public double signedRootGSquared() {
    return signedRootGSquared;
  }

  /** P(χ²₁ ≥ G²): the p-value of independence by the G-test. */
  public double gSquaredPValue() {
    return gSquaredPValue;
  }

  /** Pearson's χ² of the 2×2 table (no continuity correction), for reference. */
  public double chiSquare() {
    return chiSquare;
  }

  /** Both confidences at or above {@link MeasureSettings#bundleConfidence()}. */
  public boolean isBundle() {
    return bundle;
  }

  /** The lift's upper bound is below 1: significantly below independence. */
  public boolean isRepelling() {
    return repelling;
  }

  @Override
  public String toString() {
    return "PairMeasures[support=" + support + ", confidenceAB=" + confidenceAB + ", confidenceBA="
        + confidenceBA + ", lift=" + lift + " [" + liftLower + ", " + liftUpper + "], shrunkLift="
        + shrunkLift + ", leverage=" + leverage + ", convictionAB=" + convictionAB + ", convictionBA="
        + convictionBA + ", kulczynski=" + kulczynski + ", imbalanceRatio=" + imbalanceRatio
        + ", gSquared=" + gSquared + ", signedRootGSquared=" + signedRootGSquared + ", gSquaredPValue="
        + gSquaredPValue + ", chiSquare=" + chiSquare + ", bundle=" + bundle + ", repelling=" + repelling
        + "]";
  }
}
