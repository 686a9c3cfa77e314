package org.pairpulse.sketch.stats;

import java.util.Arrays;

/**
 * Multiple testing over many screened pairs: the Benjamini–Hochberg step-up procedure, which keeps the expected
 * share of false discoveries among the pairs it passes at most q when the tests are independent or positively
 * dependent (Benjamini &amp; Hochberg, "Controlling the false discovery rate: a practical and powerful approach to
 * multiple testing", JRSS B 57(1), 1995; Benjamini &amp; Yekutieli, Annals of Statistics 29(4), 2001, for the
 * dependence condition).
 *
 * <p>With m p-values sorted p₍₁₎ ≤ … ≤ p₍ₘ₎, let k be the largest i with p₍ᵢ₎ ≤ q·i/m; the k smallest pass. NaN
 * p-values never pass but count in m (a screened pair without a test is still a screened pair).
 */
public final class Multiplicity {
  /** The false-discovery rate the offer lists are screened at by default. */
  public static final double DEFAULT_FALSE_DISCOVERY_RATE = 0.05;

  private Multiplicity() {}

  /**
   * The Benjamini–Hochberg threshold: p-values at or below it pass (0 when none does, so nothing passes).
   *
   * @throws IllegalArgumentException unless {@code q} is in (0, 1)
   */
  public static double benjaminiHochbergThreshold(double[] pValues, double q) {
    if (!(q > 0 && q < 1)) {
      throw new IllegalArgumentException("the false-discovery rate must be in (0, 1), got " + q);
    }
    double[] sorted = pValues.clone();
    for (int i = 0; i < sorted.length; i++) {
      if (Double.isNaN(sorted[i])) {
        sorted[i] = Double.POSITIVE_INFINITY;
      }
    }
    Arrays.sort(sorted);
    int m = sorted.length;
    for (int i = m; i >= 1; i--) {
      if (sorted[i - 1] <= q * i / m) {
        return sorted[i - 1];
      }
    }
    return 0.0;
  }

  /** Which of {@code pValues} pass the Benjamini–Hochberg step at rate {@code q}. */
  public static boolean[] benjaminiHochberg(double[] pValues, double q) {
    double threshold = benjaminiHochbergThreshold(pValues, q);
    boolean[] pass = new boolean[pValues.length];
    for (int i = 0; i < pValues.length; i++) {
      pass[i] = pValues[i] <= threshold && threshold > 0;
    }
    return pass;
  }
}
