package org.pairpulse.sketch.stats;

import org.apache.commons.math3.special.Erf;

/**
 * The knobs of {@link PairMeasures#of}.
 *
 * @param confidenceLevel two-sided level of the lift interval, in (0, 1); default 0.95
 * @param shrinkPriorBaskets k, the prior's weight in baskets for the shrunk lift
 *     {@code (n_ab + k) / (E + k)}, finite and {@code >= 0} (0 turns shrinking off); default 10
 * @param bundleConfidence the confidence both ways at or above which a pair is a bundle pair, in
 *     (0, 1]; default 0.95
 */
public record MeasureSettings(double confidenceLevel, double shrinkPriorBaskets, double bundleConfidence) {

  public static final double DEFAULT_CONFIDENCE_LEVEL = 0.95;
  public static final double DEFAULT_SHRINK_PRIOR_BASKETS = 10.0;
  public static final double DEFAULT_BUNDLE_CONFIDENCE = 0.95;

  private static final MeasureSettings DEFAULTS = new MeasureSettings(
      DEFAULT_CONFIDENCE_LEVEL, DEFAULT_SHRINK_PRIOR_BASKETS, DEFAULT_BUNDLE_CONFIDENCE);

  /** @throws IllegalArgumentException if a setting is outside its range (see the record doc) */
  public MeasureSettings {
    if (!(confidenceLevel > 0.0 && confidenceLevel < 1.0)) {
      throw new IllegalArgumentException("confidenceLevel must be in (0, 1), got " + confidenceLevel);
    }
    if (!(shrinkPriorBaskets >= 0.0) || shrinkPriorBaskets == Double.POSITIVE_INFINITY) {
      throw new IllegalArgumentException(
          "shrinkPriorBaskets must be finite and >= 0, got " + shrinkPriorBaskets);
    }
    if (!(bundleConfidence > 0.0 && bundleConfidence <= 1.0)) {
      throw new IllegalArgumentException("bundleConfidence must be in (0, 1], got " + bundleConfidence);
    }
  }

  /** Level 0.95, prior weight 10 baskets, bundle confidence 0.95. */
  public static MeasureSettings defaults() {
    return DEFAULTS;
  }

  /**
   * The two-sided standard-normal quantile z for {@link #confidenceLevel()}:
   * {@code Φ⁻¹((1 + level) / 2) = √2 · erf⁻¹(level)} (1.959964 for 0.95).
   */
  public double zScore() {
    return confidenceLevel == DEFAULT_CONFIDENCE_LEVEL ? DEFAULT_Z_SCORE : zScoreOf(confidenceLevel);
  }

  /** z of the default level, computed once (a refresh asks for it for every pair of every horizon). */
  private static final double DEFAULT_Z_SCORE = zScoreOf(DEFAULT_CONFIDENCE_LEVEL);

  private static double zScoreOf(double level) {
    return Math.sqrt(2.0) * Erf.erfInv(level);
  }
}
