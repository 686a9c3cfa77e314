package org.pairpulse.sketch.stats;

/**
 * Point counts made consistent with what true counts obey: {@code n_a, n_b <= N} and
 * {@code n_ab <= min(n_a, n_b)}. Sketches overcount, so their raw point values may break these;
 * clamping keeps support and confidences within [0, 1] and the 2×2 table's first three cells
 * non-negative (the fourth is clamped at 0 by {@link TwoByTwoTable}).
 */
record ClampedCounts(double baskets, double countA, double countB, double countAB) {

  static ClampedCounts of(double baskets, double countA, double countB, double countAB) {
    double clampedA = Math.min(countA, baskets);
    double clampedB = Math.min(countB, baskets);
    double clampedAB = Math.min(countAB, Math.min(clampedA, clampedB));
    return new ClampedCounts(baskets, clampedA, clampedB, clampedAB);
  }

  static ClampedCounts pointValuesOf(PairCounts counts) {
    return of(counts.baskets(), counts.countA().value(), counts.countB().value(), counts.countAB().value());
  }

  /** N·n_ab / (n_a·n_b); NaN when N, n_a or n_b is 0. */
  double lift() {
    return baskets * countAB / (countA * countB);
  }

  /** E = n_a·n_b / N, the pair count expected under independence; NaN when N is 0. */
  double expectedCountAB() {
    return countA * countB / baskets;
  }
}
