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
 * The lift interval combines the sketch bounds and a log-scale sampling interval; its construction
 * is documented on {@link LiftInterval}.
 *
 * <h2>Two null models: size-adjusted (the default) and textbook</h2>
 * The formulas above compare n_ab with E = n_a·n_b/N, independence over all baskets. A large basket
 * holds more of everything, so under that model every pair of popular items looks associated when
 * basket sizes vary. When the counts carry the stratified expected count
 * E = Σ_s n_a,s·n_b,s/N_s over basket-size classes ({@link PairCounts#stratifiedExpectedAB()},
 * {@link MantelHaenszel}), the measures that read E take it instead:
 * <pre>
 *   lift           = n_ab / E                      (an observed-over-expected ratio)
 *   leverage       = (n_ab − E) / N
 *   convictionAB   = (1 − E/n_a) / (1 − confidenceAB)   (E/n_a: the confidence the null model expects)
 *   shrunkLift     = (n_ab/φ + k) / (E/φ + k)      [5] (DuMouchel's expected counts are stratified too)
 *   gSquared       = 2·(n_ab·ln(n_ab/E) − (n_ab − E)) / φ, the G-test of n_ab ~ Poisson(E), E given the margins
 *   lift interval  = {@link LiftInterval#adjusted}; repelling = its upper end below 1
 * </pre>
 * φ ≥ 1 is the pair count's dispersion ({@link PairCounts#pairCountDispersion()}): above the pair cap a basket's
 * pairs are sampled and weigh the step, so n_ab varies φ times as much as a count of baskets. The tests, the
 * interval and the shrinker read n_ab/φ and E/φ, the evidence in baskets (the quasi-Poisson scaling of the
 * deviance, McCullagh and Nelder, Generalized Linear Models, 2nd ed., 1989, section 6.2, from memory); φ = 1 without
 * capped baskets.
 * These are {@link #lift()}, {@link #liftLower()}, {@link #shrunkLift()}, {@link #leverage()},
 * {@link #convictionAB()}, {@link #gSquared()} and their companions: what ranking, filtering and alerts read.
 * The textbook values stay available as {@code …Unadjusted()} ({@link #liftUnadjusted()} and so on; the
 * measures {@code lift_unadjusted} etc. of {@link Measure}). Without size classes the two coincide exactly.
 * Support, confidence, Kulczynski, the imbalance ratio and χ² do not read a null model.
 *
 * <p>{@link #associationPValue()} is the one-sided test the offer lists screen pairs with:
 * P(X ≥ n_ab.lower/φ) for X ~ Poisson(λ·E.upper/φ), at the least favourable sketch bounds and in effective
 * baskets, with a gamma factor λ of mean 1 and coefficient of variation {@link #NULL_MODEL_TOLERANCE} for the null
 * model's own error (so the variance is φ·E + τ²·E² in count units).
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
  private final double kulczynski;
  private final double imbalanceRatio;
  private final double chiSquare;
  private final boolean bundle;
  private final double expectedCountAB;
  /** The observed count and the expected count at the bounds that {@link #associationPValue()} reads. */
  private final double pValueCount;
  private final double pValueMean;
  /** The measures that depend on the null model: size-adjusted (the default) and textbook. */
  private final NullModelMeasures adjusted;
  private final NullModelMeasures unadjusted;

  /**
   * τ, the relative error allowed to the null model's expected count in {@link #associationPValue()}: E is a model
   * (independence within size classes), right to within some percent for any pair, not exactly; a pair of two very
   * common items, seen together thousands of times, would otherwise pass on a few percent of model error alone.
   * 0.1 (a gamma-distributed factor of mean 1 and standard deviation 0.1 on E, the mixture of DuMouchel's shrinker
   * [5]) leaves thin pairs to the Poisson term and asks a heavily evidenced one for a lift clearly beyond 1.
   */
  public static final double NULL_MODEL_TOLERANCE = 0.1;

  /** The measures that read E, the pair count expected under a null model. */
  private record NullModelMeasures(double lift, double liftLower, double liftUpper, double shrunkLift, double leverage,
      double convictionAB, double convictionBA, double gSquared, double signedRootGSquared) {

    /**
     * P(χ²₁ ≥ G²), computed when read (a complementary error function: few readers ask for it, and a table's
     * readers compute the measures of many pairs to rank them).
     */
    double gSquaredPValue() {
      return TwoByTwoTable.chiSquareOneDfPValue(gSquared);
    }

    @Override
    public String toString() {
      return "NullModelMeasures[lift=" + lift + ", liftLower=" + liftLower + ", liftUpper=" + liftUpper
          + ", shrunkLift=" + shrunkLift + ", leverage=" + leverage + ", convictionAB=" + convictionAB
          + ", convictionBA=" + convictionBA + ", gSquared=" + gSquared + ", signedRootGSquared=" + signedRootGSquared
          + ", gSquaredPValue=" + gSquaredPValue() + "]";
    }

    boolean repelling() {
      return liftUpper < 1.0;
    }
  }

  private PairMeasures(PairCounts counts, MeasureSettings settings) {
    ClampedCounts point = ClampedCounts.pointValuesOf(counts);
    double baskets = point.baskets();
    double supportA = point.countA() / baskets;
    double supportB = point.countB() / baskets;

    support = point.countAB() / baskets;
    confidenceAB = point.countAB() / point.countA();
    confidenceBA = point.countAB() / point.countB();
    kulczynski = (confidenceAB + confidenceBA) / 2.0;
    imbalanceRatio = Math.abs(point.countA() - point.countB())
        / (point.countA() + point.countB() - point.countAB());
    bundle = confidenceAB >= settings.bundleConfidence() && confidenceBA >= settings.bundleConfidence();

    double lift = point.lift();
    double prior = settings.shrinkPriorBaskets();
    LiftInterval interval = LiftInterval.of(counts, point, settings);
    TwoByTwoTable table = TwoByTwoTable.of(point);
    double gSquared = table.gSquared();
    unadjusted = new NullModelMeasures(lift, interval.lower(), interval.upper(),
        (point.countAB() + prior) / (point.expectedCountAB() + prior), support - supportA * supportB,
        conviction(confidenceAB, supportB), conviction(confidenceBA, supportA), gSquared, table.signedRoot(gSquared));
    chiSquare = table.chiSquare();

    Estimate expected = counts.expectedCountAB();
    double expectedPoint = Math.min(expected.value(), Math.min(point.countA(), point.countB()));
    expectedCountAB = counts.isStratified() ? expectedPoint : point.expectedCountAB();
    adjusted = counts.isStratified() ? adjusted(counts, point, expectedPoint, settings) : unadjusted;
    // the tail (an incomplete beta function) is computed when asked: only the offer screen reads it, for one
    // horizon, while a refresh builds the measures of every pair in every horizon
    pValueCount = pValueCount(counts);
    pValueMean = pValueMean(counts, expected);
  }

  /** The observed count {@link #associationPValue()} reads: n_ab's lower bound (≤ both n_a's upper), over φ. */
  private static double pValueCount(PairCounts counts) {
    double baskets = counts.baskets();
    double upperA = Math.min(counts.countA().upper(), baskets);
    double upperB = Math.min(counts.countB().upper(), baskets);
    return Math.min(counts.countAB().lower(), Math.min(upperA, upperB)) / dispersion(counts);
  }

  /** The mean {@link #associationPValue()} reads: E's upper bound over φ. */
  private static double pValueMean(PairCounts counts, Estimate expected) {
    return expected.upper() / dispersion(counts);
  }

  /** φ: in effective baskets a weighted pair count varies φ times as much as a count of baskets (1 unstratified). */
  private static double dispersion(PairCounts counts) {
    return counts.isStratified() ? counts.pairCountDispersion() : 1.0;
  }

  /**
   * {@link #associationPValue()} of {@code counts} without the other measures (bit for bit the value that
   * {@code of(counts, settings).associationPValue()} returns for any settings: the test reads counts and E only). The
   * offer screen needs every published pair's p-value but no other measure.
   */
  public static double associationPValue(PairCounts counts) {
    return gammaPoissonUpperTail(pValueCount(counts), pValueMean(counts, counts.expectedCountAB()),
        NULL_MODEL_TOLERANCE);
  }

  /** The size-adjusted measures: E from basket-size classes in place of n_a·n_b/N (see the class comment). */
  private static NullModelMeasures adjusted(PairCounts counts, ClampedCounts point, double expected,
      MeasureSettings settings) {
    double baskets = point.baskets();
    double observed = point.countAB();
    double lift = point.countA() == 0 || point.countB() == 0 ? Double.NaN : observed / expected;
    LiftInterval interval = LiftInterval.adjusted(counts, point, lift, settings);
    double prior = settings.shrinkPriorBaskets();
    double dispersion = counts.pairCountDispersion();
    double gSquared = poissonGSquared(observed, expected) / dispersion;
    double root = Math.sqrt(gSquared);
    double shrunk = (observed / dispersion + prior) / (expected / dispersion + prior);
    return new NullModelMeasures(lift, interval.lower(), interval.upper(), shrunk,
        (observed - expected) / baskets, conviction(observed / point.countA(), expected / point.countA()),
        conviction(observed / point.countB(), expected / point.countB()), gSquared,
        observed < expected ? -root : root);
  }

  /**
   * G² of the Poisson model of n_ab with known mean E against the saturated one: 2·(O·ln(O/E) − (O − E)), with
   * 0·ln 0 = 0; 0 when E is 0 (no model to test against).
   */
  static double poissonGSquared(double observed, double expected) {
    if (!(expected > 0)) {
      return 0.0;
    }
    double logTerm = observed == 0 ? 0.0 : observed * Math.log(observed / expected);
    return Math.max(0.0, 2.0 * (logTerm - (observed - expected)));
  }

  /**
   * P(X ≥ x) for X ~ Poisson(λ·mean) with λ ~ Gamma(1/τ², rate 1/τ²) (mean 1, coefficient of variation τ): the
   * negative binomial with mean E and variance E + τ²E², continued to real x by the regularised incomplete beta
   * function, I_{E/(E + r)}(x, r) with r = 1/τ² (exact for whole x); τ = 0 is the Poisson tail. 1 when x ≤ 0.
   */
  static double gammaPoissonUpperTail(double x, double mean, double tolerance) {
    if (!(x > 0)) {
      return 1.0;
    }
    if (!(mean > 0)) {
      return 0.0;
    }
    if (tolerance == 0) {
      return poissonUpperTail(x, mean);
    }
    double r = 1.0 / (tolerance * tolerance);
    return org.apache.commons.math3.special.Beta.regularizedBeta(mean / (mean + r), x, r);
  }

  /**
   * P(X ≥ x) for X ~ Poisson(mean), continued to real x by the regularised incomplete gamma function
   * P(x, mean) (exact for whole x: the waiting time to the x-th event); 1 when x ≤ 0.
   */
  static double poissonUpperTail(double x, double mean) {
    if (!(x > 0)) {
      return 1.0;
    }
    if (!(mean > 0)) {
      return 0.0;
    }
    return org.apache.commons.math3.special.Gamma.regularizedGammaP(x, mean);
  }

  /** The measures of {@code counts} under {@code settings}. */
  public static PairMeasures of(PairCounts counts, MeasureSettings settings) {
    return new PairMeasures(Objects.requireNonNull(counts, "counts"), Objects.requireNonNull(settings, "settings"));
  }

  /** The measures of {@code counts} under {@link MeasureSettings#defaults()}. */
  public static PairMeasures of(PairCounts counts) {
    return of(counts, MeasureSettings.defaults());
  }

  /**
   * (1 − expected confidence) / (1 − confidence); +∞ at confidence 1, NaN at 0/0. The expected confidence is the
   * consequent's support under plain independence, E/n_antecedent under the size-adjusted null model.
   */
  private static double conviction(double confidence, double expectedConfidence) {
    double numerator = 1.0 - expectedConfidence;
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

  /**
   * E, the pair count expected under the size-adjusted null model (point value): Σ_s n_a,s·n_b,s/N_s, or
   * n_a·n_b/N when the counts carry no size classes.
   */
  public double expectedCountAB() {
    return expectedCountAB;
  }

  /** Size-adjusted lift n_ab / E (the textbook N·n_ab/(n_a·n_b) when the counts carry no size classes). */
  public double lift() {
    return adjusted.lift();
  }

  /** Lower end of the two-sided interval of {@link #lift()} (sketch and sampling error). */
  public double liftLower() {
    return adjusted.liftLower();
  }

  /** Upper end of the two-sided interval of {@link #lift()} (sketch and sampling error); may be +∞. */
  public double liftUpper() {
    return adjusted.liftUpper();
  }

  /** Size-adjusted shrunk lift (n_ab/φ + k) / (E/φ + k): lift pulled toward 1 when evidence is thin. */
  public double shrunkLift() {
    return adjusted.shrunkLift();
  }

  /** Size-adjusted leverage (n_ab − E)/N. */
  public double leverage() {
    return adjusted.leverage();
  }

  /** Size-adjusted conviction of a ⇒ b: (1 − E/n_a) / (1 − confidenceAB); +∞ when confidenceAB is 1. */
  public double convictionAB() {
    return adjusted.convictionAB();
  }

  /** Size-adjusted conviction of b ⇒ a: (1 − E/n_b) / (1 − confidenceBA); +∞ when confidenceBA is 1. */
  public double convictionBA() {
    return adjusted.convictionBA();
  }

  /** Mean of the two confidences (null-invariant). */
  public double kulczynski() {
    return kulczynski;
  }

  /** |n_a − n_b| / (n_a + n_b − n_ab): 0 balanced, toward 1 lopsided. */
  public double imbalanceRatio() {
    return imbalanceRatio;
  }

  /** Size-adjusted G²: of n_ab against the Poisson mean E (Dunning's G² of the 2×2 table without size classes). */
  public double gSquared() {
    return adjusted.gSquared();
  }

  /** √{@link #gSquared()}, positive when n_ab is above E and negative when below. */
  public double signedRootGSquared() {
    return adjusted.signedRootGSquared();
  }

  /** P(χ²₁ ≥ {@link #gSquared()}): the p-value of the size-adjusted null model by the G-test. */
  public double gSquaredPValue() {
    return adjusted.gSquaredPValue();
  }

  /**
   * One-sided p-value of the size-adjusted association at the sketch's least favourable bounds, in effective baskets
   * (φ the pair count's dispersion): P(X ≥ n_ab.lower/φ) for X ~ Poisson(λ·E.upper/φ), λ ~ Gamma with mean 1 and coefficient of variation
   * {@link #NULL_MODEL_TOLERANCE} (a negative binomial). Small when the pair occurs together more often than the
   * null model allows even at the bounds and its own tolerance; the offer lists pass it through a multiplicity
   * step.
   */
  public double associationPValue() {
    return gammaPoissonUpperTail(pValueCount, pValueMean, NULL_MODEL_TOLERANCE);
  }

  /** Pearson's χ² of the 2×2 table (no continuity correction, plain independence), for reference. */
  public double chiSquare() {
    return chiSquare;
  }

  /** Both confidences at or above {@link MeasureSettings#bundleConfidence()}. */
  public boolean isBundle() {
    return bundle;
  }

  /** The size-adjusted lift's upper bound is below 1: significantly below independence within size classes. */
  public boolean isRepelling() {
    return adjusted.repelling();
  }

  // ------------------------------------------------------------ textbook values (plain independence)

  /** The textbook lift N·n_ab / (n_a·n_b), whatever the basket sizes. */
  public double liftUnadjusted() {
    return unadjusted.lift();
  }

  /** Lower end of the textbook lift's interval. */
  public double liftLowerUnadjusted() {
    return unadjusted.liftLower();
  }

  /** Upper end of the textbook lift's interval; may be +∞. */
  public double liftUpperUnadjusted() {
    return unadjusted.liftUpper();
  }

  /** (n_ab + k) / (n_a·n_b/N + k). */
  public double shrunkLiftUnadjusted() {
    return unadjusted.shrunkLift();
  }

  /** n_ab/N − (n_a/N)(n_b/N) [2]. */
  public double leverageUnadjusted() {
    return unadjusted.leverage();
  }

  /** (1 − n_b/N) / (1 − confidenceAB) [3]. */
  public double convictionABUnadjusted() {
    return unadjusted.convictionAB();
  }

  /** (1 − n_a/N) / (1 − confidenceBA) [3]. */
  public double convictionBAUnadjusted() {
    return unadjusted.convictionBA();
  }

  /** Dunning's G² of the 2×2 table [1]. */
  public double gSquaredUnadjusted() {
    return unadjusted.gSquared();
  }

  /** Signed √G² of the 2×2 table. */
  public double signedRootGSquaredUnadjusted() {
    return unadjusted.signedRootGSquared();
  }

  /** P(χ²₁ ≥ G²) of the 2×2 table. */
  public double gSquaredPValueUnadjusted() {
    return unadjusted.gSquaredPValue();
  }

  /** The textbook lift's upper bound is below 1. */
  public boolean isRepellingUnadjusted() {
    return unadjusted.repelling();
  }

  @Override
  public String toString() {
    return "PairMeasures[support=" + support + ", confidenceAB=" + confidenceAB + ", confidenceBA=" + confidenceBA
        + ", expectedCountAB=" + expectedCountAB + ", adjusted=" + adjusted + ", unadjusted=" + unadjusted
        + ", kulczynski=" + kulczynski + ", imbalanceRatio=" + imbalanceRatio + ", chiSquare=" + chiSquare
        + ", associationPValue=" + associationPValue() + ", bundle=" + bundle + "]";
  }
}
