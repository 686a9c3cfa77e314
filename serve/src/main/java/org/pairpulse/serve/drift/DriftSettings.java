package org.pairpulse.serve.drift;

import java.time.Duration;
import java.util.List;

/**
 * Thresholds of drift detection and of the alert state machine. What the tests and routes mean is in
 * {@link DriftStatistics} and {@link DriftFinding}; serve's README says it in plain words.
 *
 * <h2>Calibration of enterRootG2</h2>
 * Every published pair is tested at every refresh. Refreshes are frequent (every 2 s in serving, every few
 * minutes in a backtest) but the statistics of one pair move slowly: the recent period is a decay with a
 * half-life of hours, so successive tests of a pair are nearly the same test. Counted conservatively as one
 * fresh test per pair per hour, both tests and both directions, 16,384 tracked pairs give about
 * 16,384 × 24 × 4 ≈ 1.6·10⁶ tests a day; a two-sided p of 5.7·10⁻⁷ (|√G²| ≥ 5) keeps the expected number of
 * false entries at about 0.9 a day by Bonferroni's bound before the further conditions (effect size, the
 * second test not against it, the dwell), which the drift benchmark's family measures at well under 0.5 a day.
 *
 * <table>
 *   <caption>Settings and defaults</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>recentHorizon / referenceHorizon</td><td>recent / tracking</td><td>the two periods compared: the
 *       recent decay (half-life 6 h) against the engine's tracking decay (half-life 7 days, read from the wide
 *       decay sketches, so that a pair admitted late still has a usable bound on its past), less the recent decay
 *       ({@link DriftStatistics#excluding}); a table that does not hold the reference horizon (one not refreshed
 *       from an engine) is read against its longest window</td></tr>
 *   <tr><td>enterRootG2</td><td>5.0</td><td>|signed √G²| a test needs to count as moved (see above)</td></tr>
 *   <tr><td>exitRootG2</td><td>3.0</td><td>an active alert clears when neither test stays this strong
 *       (p ≈ 0.0027); also the level at which the other test must not contradict an entry, and the level of the
 *       interval that shows an association unchanged</td></tr>
 *   <tr><td>enterRatio</td><td>1.5</td><td>effect size to enter: rate ratio or odds-ratio ratio ≥ 1.5 (emerging)
 *       or ≤ 1/1.5 (fading); significance alone would flag tiny shifts of very common pairs</td></tr>
 *   <tr><td>exitRatio</td><td>1.2</td><td>an active alert clears when its ratios fall back inside [1/1.2, 1.2]</td></tr>
 *   <tr><td>bundleExitConfidence</td><td>0.90</td><td>a new-bundle alert needs the reference period's smaller
 *       confidence below this (the pair was clearly not near-certain before) and clears when a recent
 *       confidence falls below it; the table's bundle threshold (default 0.95) is the entry</td></tr>
 *   <tr><td>minDwellMillis</td><td>15 min</td><td>a condition must hold this long, continuously, before an alert is
 *       raised, and its end must hold this long before the alert is resolved</td></tr>
 *   <tr><td>cooldownMillis</td><td>6 h</td><td>after an alert is resolved, the same pair and kind cannot alert again
 *       for this long</td></tr>
 *   <tr><td>maxReported</td><td>100</td><td>entries per kind kept in a drift report</td></tr>
 *   <tr><td>shortHalfLivesMillis</td><td>1 h, 2 h</td><td>the short scales each pair is also tested at (decays the
 *       monitor derives from successive tables, {@link ShortScale}); empty: the recent decay only</td></tr>
 * </table>
 */
public record DriftSettings(String recentHorizon, String referenceHorizon, double enterRootG2, double exitRootG2,
    double enterRatio, double exitRatio, double bundleExitConfidence, long minDwellMillis,
    long cooldownMillis, int maxReported, List<Long> shortHalfLivesMillis) {

  public DriftSettings {
    if (recentHorizon == null || referenceHorizon == null || recentHorizon.equals(referenceHorizon)) {
      throw new IllegalArgumentException("need two different horizons, got " + recentHorizon + ", " + referenceHorizon);
    }
    if (!(exitRootG2 >= 0 && enterRootG2 >= exitRootG2) || Double.isInfinite(enterRootG2)) {
      throw new IllegalArgumentException("need 0 <= exitRootG2 <= enterRootG2 < inf, got " + exitRootG2 + ", " + enterRootG2);
    }
    if (!(exitRatio >= 1 && enterRatio >= exitRatio) || Double.isInfinite(enterRatio)) {
      throw new IllegalArgumentException(
          "need 1 <= exitRatio <= enterRatio < inf, got " + exitRatio + ", " + enterRatio);
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
    shortHalfLivesMillis = List.copyOf(shortHalfLivesMillis);
    if (shortHalfLivesMillis.stream().anyMatch(h -> h <= 0)
        || shortHalfLivesMillis.stream().distinct().count() != shortHalfLivesMillis.size()) {
      throw new IllegalArgumentException("short scales' half-lives must be distinct and > 0, got " + shortHalfLivesMillis);
    }
  }

  /** The default reference period: the engine's tracking decay, as a refreshed table holds it. */
  public static final String REFERENCE_HORIZON = org.pairpulse.sketch.table.PairTable.TRACKING_HORIZON;

  /** The defaults of the table above. */
  public static DriftSettings defaults() {
    return new DriftSettings("recent", REFERENCE_HORIZON, 5.0, 3.0, 1.5, 1.2, 0.90, Duration.ofMinutes(15).toMillis(),
        Duration.ofHours(6).toMillis(), 100, DEFAULT_SHORT_HALF_LIVES);
  }

  public DriftSettings withDwellAndCooldown(long dwellMillis, long coolMillis) {
    return new DriftSettings(recentHorizon, referenceHorizon, enterRootG2, exitRootG2, enterRatio, exitRatio,
        bundleExitConfidence, dwellMillis, coolMillis, maxReported, shortHalfLivesMillis);
  }

  public DriftSettings withShortHalfLives(List<Long> millis) {
    return new DriftSettings(recentHorizon, referenceHorizon, enterRootG2, exitRootG2, enterRatio, exitRatio,
        bundleExitConfidence, minDwellMillis, cooldownMillis, maxReported, millis);
  }

  /** The default short scales: decays of half-life 1 h and 2 h. */
  public static final List<Long> DEFAULT_SHORT_HALF_LIVES = List.of(Duration.ofHours(1).toMillis(),
      Duration.ofHours(2).toMillis());

  public DriftSettings withRootG2(double enter, double exit) {
    return new DriftSettings(recentHorizon, referenceHorizon, enter, exit, enterRatio, exitRatio,
        bundleExitConfidence, minDwellMillis, cooldownMillis, maxReported, shortHalfLivesMillis);
  }

  public DriftSettings withRatio(double enter, double exit) {
    return new DriftSettings(recentHorizon, referenceHorizon, enterRootG2, exitRootG2, enter, exit,
        bundleExitConfidence, minDwellMillis, cooldownMillis, maxReported, shortHalfLivesMillis);
  }
}
