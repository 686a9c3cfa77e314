package org.pairpulse.ops.tools.drift;

import java.util.Locale;
import org.pairpulse.ops.tools.scenario.PlantedKind;

/**
 * The change shapes of the drift family, each planted on its own items by {@link DriftStream}.
 *
 * <h2>Model (per basket, independent of everything else)</h2>
 * A planted item x is in a basket by its own draw with probability {@code own(x)}; a planted pair adds both its
 * items with probability π(t) (the pair event). So {@code P(a ∧ b) = π + (1 − π)·own(a)·own(b)}, {@code P(a) = π +
 * (1 − π)·own(a)}; with π = 0 the pair is at lift 1 (independent), and the items' own popularity never depends on
 * the background. Planted items never occur in the background traffic, so every pair of a planted item with any other
 * item stays at odds ratio 1 (lift 1) unless it is the planted pair.
 *
 * <h2>Schedule of the full stream (day 0 a Monday, 00:00 event time; 7 days)</h2>
 * <table>
 *   <caption>Shapes</caption>
 *   <tr><th>shape</th><th>kind</th><th>change</th><th>own(a), own(b)</th><th>π</th></tr>
 *   <tr><td>SUDDEN</td><td>EMERGING</td><td>day 2 20:00 (busy hour), stops day 5 20:00</td><td>0.02, 0.02</td>
 *       <td>0 → 0.004 (lift about 7.6)</td></tr>
 *   <tr><td>SUDDEN_QUIET</td><td>EMERGING</td><td>day 3 03:00 (quiet hour), to the end</td><td>0.02, 0.02</td>
 *       <td>0 → 0.004</td></tr>
 *   <tr><td>GRADUAL</td><td>EMERGING</td><td>linear ramp day 2 08:00 → 16:00, then flat</td><td>0.02, 0.02</td>
 *       <td>0 → 0.004</td></tr>
 *   <tr><td>RIDE_ON</td><td>EMERGING</td><td>day 3 14:00, a new pair whose item b rides on it</td>
 *       <td>0.015, 0.0005</td><td>0 → 0.003: b's own count rises 7-fold with the pair (confidence a→b 0.17, b→a
 *       0.86)</td></tr>
 *   <tr><td>NEW_POPULAR</td><td>EMERGING</td><td>day 4 19:00, two popular items never bought together before
 *       (a basket whose own draws hold both drops b)</td><td>0.03, 0.03</td><td>0 → 0.02: confidence 0.40 both
 *       ways (inside the 0.30–0.60 promotion band)</td></tr>
 *   <tr><td>FADING</td><td>FADING</td><td>association ends day 3 20:00 (busy hour)</td><td>0.02, 0.02</td>
 *       <td>0.004 → 0</td></tr>
 *   <tr><td>FADING_RIDE_ON</td><td>FADING</td><td>ends day 5 04:00 (quiet hour): b's count falls with the pair</td>
 *       <td>0.015, 0.0005</td><td>0.003 → 0</td></tr>
 *   <tr><td>POPULARITY_SPIKE</td><td>NOISE_POPULARITY</td><td>one item's own share 0.01 → 0.08 over [day 4 08:00,
 *       day 5 08:00); all its pairs stay at lift 1</td><td>0.01</td><td>none</td></tr>
 *   <tr><td>RARE_TRAP</td><td>RARE_TRAP</td><td>6 baskets with both rare items, day 3 10:00–12:00 (one every 20
 *       min)</td><td>0.0003, 0.0003</td><td>none</td></tr>
 *   <tr><td>STEADY_PAIR</td><td>AFFINITY</td><td>none (associated over the whole run)</td><td>0.02, 0.02</td>
 *       <td>0.004</td></tr>
 *   <tr><td>STEADY_BUNDLE</td><td>BUNDLE</td><td>none (near-certain over the whole run)</td><td>0.0002, 0.0002</td>
 *       <td>0.01: confidence 0.98 both ways</td></tr>
 *   <tr><td>TRAFFIC_SHIFT</td><td>(no pair)</td><td>days 5 and 6 (the weekend) at 0.6 × the weekday traffic</td>
 *       <td></td><td></td></tr>
 * </table>
 * A member stream ({@link DriftFamily#member}) plants one shape with its change on day 2 at the same hour.
 */
public enum DriftShape {
  SUDDEN(PlantedKind.EMERGING, 2, 20, 0.02, 0.02, 0.004, 0, 72),
  SUDDEN_QUIET(PlantedKind.EMERGING, 3, 3, 0.02, 0.02, 0.004, 0, 0),
  GRADUAL(PlantedKind.EMERGING, 2, 8, 0.02, 0.02, 0.004, 8, 0),
  RIDE_ON(PlantedKind.EMERGING, 3, 14, 0.015, 0.0005, 0.003, 0, 0),
  NEW_POPULAR(PlantedKind.EMERGING, 4, 19, 0.03, 0.03, 0.02, 0, 0),
  FADING(PlantedKind.FADING, 3, 20, 0.02, 0.02, 0.004, 0, 0),
  FADING_RIDE_ON(PlantedKind.FADING, 5, 4, 0.015, 0.0005, 0.003, 0, 0),
  POPULARITY_SPIKE(PlantedKind.NOISE_POPULARITY, 4, 8, 0.01, 0, 0, 0, 24),
  RARE_TRAP(PlantedKind.RARE_TRAP, 3, 10, 0.0003, 0.0003, 0, 0, 2),
  STEADY_PAIR(PlantedKind.AFFINITY, 0, 0, 0.02, 0.02, 0.004, 0, 0),
  STEADY_BUNDLE(PlantedKind.BUNDLE, 0, 0, 0.0002, 0.0002, 0.01, 0, 0),
  TRAFFIC_SHIFT(null, 5, 0, 0, 0, 0, 0, 48);

  /** The spike's own share inside its day. */
  static final double SPIKE_SHARE = 0.08;
  /** The rare trap's co-occurrences. */
  static final int TRAP_BASKETS = 6;
  /** Weekend traffic relative to a weekday's. */
  static final double SHIFTED_TRAFFIC = 0.6;

  private final PlantedKind kind;
  private final int fullDay;
  private final int hour;
  final double ownA;
  final double ownB;
  final double pairShare;
  final int rampHours;
  final int activeHours;

  DriftShape(PlantedKind kind, int fullDay, int hour, double ownA, double ownB, double pairShare, int rampHours,
      int activeHours) {
    this.kind = kind;
    this.fullDay = fullDay;
    this.hour = hour;
    this.ownA = ownA;
    this.ownB = ownB;
    this.pairShare = pairShare;
    this.rampHours = rampHours;
    this.activeHours = activeHours;
  }

  /** The ground-truth kind of the shape's pair (null for {@link #TRAFFIC_SHIFT}, which has none). */
  public PlantedKind kind() {
    return kind;
  }

  /** Whether the shape is a planted change a detector should alert on (emerging or fading). */
  public boolean isChange() {
    return kind == PlantedKind.EMERGING || kind == PlantedKind.FADING;
  }

  /** The day of the change (or the event) in the full stream. */
  public int fullDay() {
    return fullDay;
  }

  /** The hour of day of the change (or the event). */
  public int hour() {
    return hour;
  }

  /** The lower-case name people read ({@code sudden_quiet}). */
  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }
}
