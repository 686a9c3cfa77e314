package org.pairpulse.sketch.stats;

import java.util.Objects;

/**
 * The counts behind one pair {a, b} in one horizon: N, n_a, n_b and n_ab.
 *
 * <p>Counts are time-weighted (a window's sum over panes, or forward-decayed weights) and may be
 * non-integer. The item and pair counts usually come from sketches that overcount, so the
 * relations a true count obeys ({@code n_ab <= min(n_a, n_b)}, {@code n_a, n_b <= N}) are
 * <em>not</em> required here; {@link PairMeasures#of} clamps the point values and the bounds into
 * a consistent table before computing anything.
 *
 * <p>Units: the interval, G² and the shrunk lift read the counts as numbers of baskets, so a
 * decayed horizon should pass counts normalised so that one fresh basket weighs about 1 (the ratio
 * measures do not care, see {@link PairMeasures}).
 *
 * @param baskets N, the (weighted) number of baskets in the horizon, counted exactly
 * @param countA n_a, the (weighted) number of baskets containing a
 * @param countB n_b, the (weighted) number of baskets containing b
 * <h2>The null model</h2>
 * {@code stratifiedExpectedAB} is E = Σ_s n_a,s·n_b,s / N_s over basket-size classes
 * ({@link MantelHaenszel}, {@link SizeClasses}) with the bounds that the per-class counts allow; the
 * size-adjusted measures of {@link PairMeasures} read it. It is null when the counts carry no size
 * classes: then E is the textbook n_a·n_b/N and the adjusted measures equal the textbook ones.
 *
 * @param countAB n_ab, the (weighted) number of baskets containing both a and b
 * <h2>Weighted pair counts</h2>
 * Above the pair cap a basket's pairs are sampled and weigh the sampling step, so n_ab is not a count of
 * independent baskets: {@code pairCountDispersion} φ (at least 1) is its variance-to-mean ratio under the null
 * model, and n_ab weighs as n_ab / φ baskets of evidence (Kish's effective count). The size-adjusted tests, the
 * interval and the shrunk lift read it; the textbook measures do not (they read every count as baskets).
 *
 * @param stratifiedExpectedAB E under independence within basket-size classes, with bounds; null for
 *     plain independence (one class)
 * @param pairCountDispersion φ ≥ 1, the variance-to-mean ratio of n_ab under the null model from the pair cap's
 *     sampling weights; 1 when no basket was above the cap (or the counts carry no size classes)
 */
public record PairCounts(double baskets, Estimate countA, Estimate countB, Estimate countAB,
    Estimate stratifiedExpectedAB, double pairCountDispersion) {

  /**
   * @throws IllegalArgumentException if {@code baskets} is NaN, infinite or negative, or the dispersion is not a
   *     finite number of at least 1
   * @throws NullPointerException if a count's estimate is null
   */
  public PairCounts {
    Estimate.requireCount("baskets", baskets);
    if (!(pairCountDispersion >= 1.0) || Double.isInfinite(pairCountDispersion)) {
      throw new IllegalArgumentException("pairCountDispersion must be finite and >= 1, got " + pairCountDispersion);
    }
    Objects.requireNonNull(countA, "countA");
    Objects.requireNonNull(countB, "countB");
    Objects.requireNonNull(countAB, "countAB");
  }

  /** Counts without size classes: the null model is plain independence. */
  public PairCounts(double baskets, Estimate countA, Estimate countB, Estimate countAB) {
    this(baskets, countA, countB, countAB, null, 1.0);
  }

  /** These counts with E taken within basket-size classes (see the class comment), every pair count of weight 1. */
  public PairCounts withStratifiedExpected(Estimate expected) {
    return withStratifiedExpected(expected, 1.0);
  }

  /** These counts with E taken within basket-size classes and the pair count's dispersion φ (see the class comment). */
  public PairCounts withStratifiedExpected(Estimate expected, double dispersion) {
    return new PairCounts(baskets, countA, countB, countAB, Objects.requireNonNull(expected, "expected"), dispersion);
  }

  /** Whether E comes from basket-size classes (else it is the textbook n_a·n_b/N). */
  public boolean isStratified() {
    return stratifiedExpectedAB != null;
  }

  /**
   * E, the pair count expected under the null model, with bounds: the stratified one when present, else
   * n_a·n_b/N from the point values and the bounds of the margins (each clamped to N; 0 when N is 0).
   */
  public Estimate expectedCountAB() {
    if (stratifiedExpectedAB != null) {
      return stratifiedExpectedAB;
    }
    if (!(baskets > 0)) {
      return Estimate.exact(0);
    }
    double value = Math.min(countA.value(), baskets) * Math.min(countB.value(), baskets) / baskets;
    double lower = Math.min(countA.lower(), baskets) * Math.min(countB.lower(), baskets) / baskets;
    double upper = Math.min(countA.upper(), baskets) * Math.min(countB.upper(), baskets) / baskets;
    return new Estimate(value, Math.min(lower, value), Math.max(upper, value));
  }

  /** Counts known exactly (no sketch error). */
  public static PairCounts exact(double baskets, double countA, double countB, double countAB) {
    return new PairCounts(baskets, Estimate.exact(countA), Estimate.exact(countB), Estimate.exact(countAB));
  }

  /** These counts, every value and bound multiplied by {@code factor} (the dispersion, a ratio, stays). */
  public PairCounts scaledBy(double factor) {
    Estimate.requireCount("factor", factor);
    return new PairCounts(baskets * factor, countA.scaledBy(factor), countB.scaledBy(factor),
        countAB.scaledBy(factor), stratifiedExpectedAB == null ? null : stratifiedExpectedAB.scaledBy(factor),
        pairCountDispersion);
  }
}
