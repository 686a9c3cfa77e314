package org.pairpulse.sketch.stats;

/**
 * The stratified (Mantel–Haenszel) expected count of a pair and the test that goes with it.
 *
 * <p>Stratum s (a basket-size class, see {@link SizeClasses}) holds N_s baskets, n_a,s of them with a
 * and n_b,s with b. Under independence of a and b <em>within</em> every stratum, the expected number
 * of baskets holding both is
 * <pre>
 *   E = Σ_s n_a,s · n_b,s / N_s                                        (strata with N_s = 0 add 0)
 *   V = Σ_s n_a,s · n_b,s · (N_s − n_a,s) · (N_s − n_b,s) / (N_s² · (N_s − 1))
 *   CMH = (|n_ab − E| − c)² / V     (c = 1/2 with the continuity correction, else 0), χ² with 1 df
 * </pre>
 * where n_ab is the total over the strata: the test needs only the total, which is all the engine
 * counts per pair. V is the hypergeometric variance of each stratum's cell given its margins
 * [1, 2]. A stratum of one-item baskets holds no pair: its expected count is not an independence
 * expectation but a structural zero, so the engine leaves such a class out of E (see
 * {@link SizeClasses#pairless}).
 *
 * <p>The ratio n_ab / E is the pair's <em>size-adjusted lift</em>: observed over expected, as the
 * standardised incidence ratio of epidemiology, and the expected count of DuMouchel's shrinker with
 * strata (DuMouchel 1999, see {@link PairMeasures}). With one stratum E is n_a·n_b/N and the adjusted
 * lift is the textbook lift.
 *
 * <h2>References</h2>
 * <ol>
 *   <li>N. Mantel, W. Haenszel, "Statistical aspects of the analysis of data from retrospective
 *       studies of disease", Journal of the National Cancer Institute 22(4), 1959.</li>
 *   <li>A. Agresti, Categorical Data Analysis, 2nd ed., Wiley 2002, section 6.3 (the
 *       Cochran–Mantel–Haenszel test), from memory.</li>
 * </ol>
 */
public final class MantelHaenszel {
  private MantelHaenszel() {}

  /** E = Σ n_a,s·n_b,s / N_s over the strata with N_s &gt; 0. Arrays of equal length. */
  public static double expected(double[] countA, double[] countB, double[] baskets) {
    double sum = 0;
    for (int s = 0; s < baskets.length; s++) {
      if (baskets[s] > 0) {
        sum += countA[s] * countB[s] / baskets[s];
      }
    }
    return sum;
  }

  /** V = Σ n_a,s·n_b,s·(N_s − n_a,s)·(N_s − n_b,s) / (N_s²·(N_s − 1)) over the strata with N_s &gt; 1. */
  public static double variance(double[] countA, double[] countB, double[] baskets) {
    double sum = 0;
    for (int s = 0; s < baskets.length; s++) {
      double n = baskets[s];
      if (n > 1) {
        sum += countA[s] * countB[s] * (n - countA[s]) * (n - countB[s]) / (n * n * (n - 1));
      }
    }
    return sum;
  }

  /**
   * The Cochran–Mantel–Haenszel statistic (|observed − expected| − c)² / variance, c = 1/2 when
   * {@code continuityCorrection} (and |observed − expected| is at least 1/2), else 0; 0 when the variance is 0.
   */
  public static double chiSquare(double observed, double expected, double variance, boolean continuityCorrection) {
    if (!(variance > 0)) {
      return 0.0;
    }
    double difference = Math.abs(observed - expected);
    if (continuityCorrection) {
      difference = Math.max(0.0, difference - 0.5);
    }
    return difference * difference / variance;
  }
}
