package org.pairpulse.sketch.stats;

/**
 * The two-sided lift interval: sketch error and sampling error, combined.
 *
 * <h2>Sketch error</h2>
 * The extreme lifts the count bounds allow (each bound clamped to N, and n_ab to min(n_a, n_b)):
 * <pre>
 *   sketchLower = N · min(n_ab.lower, n_a.upper, n_b.upper) / (n_a.upper · n_b.upper)
 *   sketchUpper = N · min(n_ab.upper, n_a.lower, n_b.lower) / (n_a.lower · n_b.lower)
 * </pre>
 * These are the exact infimum and supremum of N·x/(y·z) over the box of bounds subject to
 * x ≤ min(y, z). When a marginal's lower bound is 0 the supremum is its limit: N / (other lower
 * bound), or +∞ when both are 0.
 *
 * <h2>Sampling error</h2>
 * A Wald interval on the log scale, ln(lift) ± z·se, as Katz, Baptista, Azen &amp; Pike (1978,
 * "Obtaining confidence intervals for the risk ratio in cohort studies", Biometrics 34(3)) do for
 * the risk ratio. The variance comes from the delta method with the 2×2 table multinomial on N
 * baskets, ln lift = ln p11 − ln p1· − ln p·1:
 * <pre>
 *   Var(ln lift) ≈ 1/n_ab − 1/n_a − 1/n_b + (2·lift − 1)/N
 * </pre>
 * At lift = 1 this is 1/n_ab − 1/n_a − 1/n_b + 1/N, but that simpler form under-covers strongly
 * associated pairs of common items (in a simulation at P(a) = P(b) = 0.5, P(ab) = 0.4, N = 20,000
 * it is negative and a nominal 95% interval covered 29% of the time; the full form covered 95%).
 * It is floored at
 * {@value #VARIANCE_FLOOR_FRACTION}/n_ab, a guard rather than a model, so that inconsistent
 * (overcounted, weighted) inputs or a table with every basket holding both items never give a
 * zero-width or NaN interval.
 *
 * <h2>Combination</h2>
 * lower = sketchLower·exp(−z·se), upper = sketchUpper·exp(+z·se), z the two-sided normal quantile
 * of the level, se from the point counts.
 *
 * <p>With n_ab = 0 the log scale breaks down: lower = 0, and the upper bound is sketchUpper with
 * n_ab's upper bound raised by the exact Poisson upper limit for zero events at one-sided level
 * (1 − level)/2, that is −ln((1 − level)/2) (3.69 at level 0.95; the "rule of three" is its
 * one-sided 95% form −ln 0.05 ≈ 3, Hanley &amp; Lippman-Hand 1983, "If nothing goes wrong, is
 * everything all right?", JAMA 249(13)). The marginals' sampling error is ignored in that case.
 */
record LiftInterval(double lower, double upper) {

  /** Floor of Var(ln lift) as a fraction of 1/n_ab. */
  static final double VARIANCE_FLOOR_FRACTION = 0.01;

  private static final LiftInterval UNDEFINED = new LiftInterval(Double.NaN, Double.NaN);

  static LiftInterval of(PairCounts counts, ClampedCounts point, MeasureSettings settings) {
    double pointLift = point.lift();
    if (Double.isNaN(pointLift)) {
      return UNDEFINED;
    }
    double baskets = counts.baskets();
    Margins m = Margins.of(counts);
    if (point.countAB() == 0) {
      double upperCountAB = counts.countAB().upper() + zeroEventsUpperCount(settings);
      return new LiftInterval(0.0, supremumLift(baskets, upperCountAB, m.lowerA, m.lowerB));
    }
    // point counts are positive here, so upperA >= point.countA() > 0 and likewise for b
    double sketchLower = baskets * Math.min(counts.countAB().lower(), Math.min(m.upperA, m.upperB))
        / (m.upperA * m.upperB);
    double sketchUpper = supremumLift(baskets, counts.countAB().upper(), m.lowerA, m.lowerB);
    double samplingFactor = Math.exp(settings.zScore() * Math.sqrt(logLiftVariance(point, pointLift)));
    return new LiftInterval(sketchLower / samplingFactor, sketchUpper * samplingFactor);
  }

  /** The margins' bounds, each clamped to N. */
  private record Margins(double lowerA, double lowerB, double upperA, double upperB) {
    static Margins of(PairCounts counts) {
      double baskets = counts.baskets();
      return new Margins(Math.min(counts.countA().lower(), baskets), Math.min(counts.countB().lower(), baskets),
          Math.min(counts.countA().upper(), baskets), Math.min(counts.countB().upper(), baskets));
    }
  }

  /** The exact Poisson upper limit for zero events at one-sided level (1 − level)/2 (see the class comment). */
  private static double zeroEventsUpperCount(MeasureSettings settings) {
    return -Math.log((1.0 - settings.confidenceLevel()) / 2.0);
  }

  /**
   * The interval of the size-adjusted lift n_ab / E ({@link PairCounts#expectedCountAB()}, with its bounds from
   * the per-class counts). Sketch extremes: min(n_ab.lower, n_a.upper, n_b.upper) / E.upper and
   * min(n_ab.upper, n_a.lower, n_b.lower) / E.lower (+∞ when E.lower is 0). Sampling: the delta-method variance
   * of the class comment with the adjusted lift in place of the pooled one, an approximation that is exact with
   * one class (the stratified E moves with its margins as n_a·n_b/N does), plus (φ − 1)/n_ab for a weighted pair
   * count (φ its dispersion, {@link PairCounts#pairCountDispersion()}: the pair cap's sampling adds (φ − 1)·n_ab to
   * the variance of n_ab, independently of the margins, which are never sampled). With n_ab = 0: [0, (n_ab.upper +
   * −ln((1 − level)/2)) / E.lower].
   */
  static LiftInterval adjusted(PairCounts counts, ClampedCounts point, double pointLift, MeasureSettings settings) {
    if (Double.isNaN(pointLift)) {
      return UNDEFINED;
    }
    Estimate expected = counts.expectedCountAB();
    Margins m = Margins.of(counts);
    if (point.countAB() == 0) {
      return new LiftInterval(0.0, ratioUpTo(counts.countAB().upper() + zeroEventsUpperCount(settings), expected.lower()));
    }
    double sketchLower = expected.upper() > 0
        ? Math.min(counts.countAB().lower(), Math.min(m.upperA, m.upperB)) / expected.upper() : 0.0;
    double sketchUpper = ratioUpTo(Math.min(counts.countAB().upper(), Math.min(m.lowerA, m.lowerB)), expected.lower());
    double variance = logLiftVariance(point, pointLift) + (counts.pairCountDispersion() - 1.0) / point.countAB();
    double samplingFactor = Math.exp(settings.zScore() * Math.sqrt(variance));
    return new LiftInterval(Math.min(sketchLower / samplingFactor, pointLift),
        Math.max(sketchUpper * samplingFactor, pointLift));
  }

  /** x / e, +∞ for x &gt; 0 over e = 0, 0 for x = 0. */
  private static double ratioUpTo(double count, double expected) {
    if (count <= 0) {
      return 0.0;
    }
    return expected > 0 ? count / expected : Double.POSITIVE_INFINITY;
  }

  /** sup of N·x/(y·z) over x ≤ upperAB, y ≥ lowerA, z ≥ lowerB, x ≤ min(y, z). */
  static double supremumLift(double baskets, double upperAB, double lowerA, double lowerB) {
    if (upperAB == 0) {
      return 0.0;
    }
    if (lowerA == 0 && lowerB == 0) {
      return Double.POSITIVE_INFINITY;
    }
    if (lowerA == 0) {
      return baskets / lowerB; // x = y → 0: confidence a ⇒ b reaches 1
    }
    if (lowerB == 0) {
      return baskets / lowerA;
    }
    return baskets * Math.min(upperAB, Math.min(lowerA, lowerB)) / (lowerA * lowerB);
  }

  /** Delta-method Var(ln lift) under multinomial sampling, floored (see the class doc). */
  static double logLiftVariance(ClampedCounts point, double lift) {
    double variance = 1.0 / point.countAB() - 1.0 / point.countA() - 1.0 / point.countB()
        + (2.0 * lift - 1.0) / point.baskets();
    return Math.max(variance, VARIANCE_FLOOR_FRACTION / point.countAB());
  }
}
