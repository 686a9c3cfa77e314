package org.pairpulse.serve.drift;

import java.time.Duration;

/**
 * Thresholds of drift detection and of the alert state machine.
 *
 * <table>
 *   <caption>Settings and defaults</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>recentHorizon / baselineHorizon</td><td>recent / baseline</td><td>the two horizons compared</td></tr>
 *   <tr><td>enterRootG2</td><td>5.0</td><td>|signed √G²| needed to enter emerging / fading: p ≈ 5.7·10⁻⁷, a
 *       Bonferroni bound of 0.05 over about 10⁵ tracked pairs, since every tracked pair is tested at each refresh</td></tr>
 *   <tr><td>exitRootG2</td><td>3.0</td><td>an active emerging / fading alert clears below this (p ≈ 0.0027)</td></tr>
 *   <tr><td>enterLiftRatio</td><td>1.5</td><td>effect size to enter: lift recent / baseline ≥ 1.5 (emerging)
 *       or ≤ 1/1.5 (fading); significance alone would flag tiny shifts of very common pairs</td></tr>
 *   <tr><td>exitLiftRatio</td><td>1.2</td><td>an active alert clears when the ratio falls back inside [1/1.2, 1.2]</td></tr>
 *   <tr><td>bundleExitConfidence</td><td>0.90</td><td>an active new-bundle alert clears when a confidence falls below
 *       this (the table's bundle threshold, default 0.95, is the entry)</td></tr>
 *   <tr><td>minDwellMillis</td><td>15 min</td><td>a condition must hold this long, continuously, before an alert is
 *       raised, and its end must hold this long before the alert is resolved</td></tr>
 *   <tr><td>cooldownMillis</td><td>6 h</td><td>after an alert is resolved, the same pair and kind cannot alert again
 *       for this long</td></tr>
 *   <tr><td>maxReported</td><td>100</td><td>entries per kind kept in a drift report</td></tr>
 * </table>
 */
public record DriftSettings(String recentHorizon, String baselineHorizon, double enterRootG2, double exitRootG2,
    double enterLiftRatio, double exitLiftRatio, double bundleExitConfidence, long minDwellMillis,
    long cooldownMillis, int maxReported) {

  public DriftSettings {
    if (recentHorizon == null || baselineHorizon == null || recentHorizon.equals(baselineHorizon)) {
      throw new IllegalArgumentException("need two different horizons, got " + recentHorizon + ", " + baselineHorizon);
    }
    if (!(exitRootG2 >= 0 && enterRootG2 >= exitRootG2) || Double.isInfinite(enterRootG2)) {
      throw new IllegalArgumentException("need 0 <= exitRootG2 <= enterRootG2 < inf, got " + exitRootG2 + ", " + enterRootG2);
    }
    if (!(exitLiftRatio >= 1 && enterLiftRatio >= exitLiftRatio) || Double.isInfinite(enterLiftRatio)) {
      throw new IllegalArgumentException(
          "need 1 <= exitLiftRatio <= enterLiftRatio < inf, got " + exitLiftRatio + ", " + enterLiftRatio);
    }
    if (!(bundleExitConfidence > 0 && bundleExitConfidence <= 1)) {
      throw new IllegalArgumentException("bundleExitConfidence must be in (0, 1], got " + bundleExitConfidence);
    }
    if (minDwellMillis < 0 || cooldownMillis < 0) {
      throw new IllegalArgumentException("minDwellMillis and cooldownMillis must be >= 0");
    }
    if (maxReported < 1) {
      throw new IllegalArgumentException("maxReported must be >= 1, got " + maxReported);
    }
  }

  /** The defaults of the table above. */
  public static DriftSettings defaults() {
    return new DriftSettings("recent", "baseline", 5.0, 3.0, 1.5, 1.2, 0.90, Duration.ofMinutes(15).toMillis(),
        Duration.ofHours(6).toMillis(), 100);
  }

  public DriftSettings withDwellAndCooldown(long dwellMillis, long coolMillis) {
    return new DriftSettings(recentHorizon, baselineHorizon, enterRootG2, exitRootG2, enterLiftRatio, exitLiftRatio,
        bundleExitConfidence, dwellMillis, coolMillis, maxReported);
  }

  public DriftSettings withRootG2(double enter, double exit) {
    return new DriftSettings(recentHorizon, baselineHorizon, enter, exit, enterLiftRatio, exitLiftRatio,
        bundleExitConfidence, minDwellMillis, cooldownMillis, maxReported);
  }

  public DriftSettings withLiftRatio(double enter, double exit) {
    return new DriftSettings(recentHorizon, baselineHorizon, enterRootG2, exitRootG2, enter, exit,
        bundleExitConfidence, minDwellMillis, cooldownMillis, maxReported);
  }
}
