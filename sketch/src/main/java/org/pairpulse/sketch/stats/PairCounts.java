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
 * @param countAB n_ab, the (weighted) number of baskets containing both a and b
 */
public record PairCounts(double baskets, Estimate countA, Estimate countB, Estimate countAB) {

  /**
   * @throws IllegalArgumentException if {@code baskets} is NaN, infinite or negative
   * @throws NullPointerException if an estimate is null
   */
  public PairCounts {
    Estimate.requireCount("baskets", baskets);
    Objects.requireNonNull(countA, "countA");
    Objects.requireNonNull(countB, "countB");
    Objects.requireNonNull(countAB, "countAB");
  }

  /** Counts known exactly (no sketch error). */
  public static PairCounts exact(double baskets, double countA, double countB, double countAB) {
    return new PairCounts(baskets, Estimate.exact(countA), Estimate.exact(countB), Estimate.exact(countAB));
  }

  /** These counts, every value and bound multiplied by {@code factor}. */
  public PairCounts scaledBy(double factor) {
    Estimate.requireCount("factor", factor);
    return new PairCounts(baskets * factor, countA.scaledBy(factor), countB.scaledBy(factor),
        countAB.scaledBy(factor));
  }
}
