package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.time.ManualClock;

/**
 * Hysteresis, dwell and cooldown of the alert state machine on a manual clock. Defaults: enter at
 * √G² ≥ 5 and lift ratio ≥ 1.5, exit below √G² 3 or ratio 1.2; dwell 15 min; cooldown 6 h.
 */
class AlertMachineTest {
  private static final long MINUTE = Duration.ofMinutes(1).toMillis();
  private static final PairKey PAIR = PairKey.of("pack-esports", "boost-lowlat");

  private final ManualClock clock = new ManualClock(1_772_409_600_000L);
  private final AlertMachine machine = new AlertMachine(DriftSettings.defaults(), "all");
  private final List<AlertEvent> events = new ArrayList<>();
  private long version;

  private static DriftFinding finding(double root, double ratio) {
    // both tests agree (rate and association), associated now: the "both" route when strong enough
    return new DriftFinding(PAIR, root, DriftStatistics.pValue(root), root, root, ratio, ratio, false, 3.0 * ratio, 3.0,
        ratio, 80, 400, 1000, 20_000, 2.0, 2.0, 8.0, 6.0, 0.4, 0.3, false, false, 0L, 21_600_000L);
  }

  private static DriftFinding bundleFinding(boolean recentBundle, boolean baselineBundle, double minConfidence) {
    return bundleFinding(recentBundle, baselineBundle, minConfidence, baselineBundle ? 0.97 : 0.5);
  }

  private static DriftFinding bundleFinding(boolean recentBundle, boolean baselineBundle, double minConfidence,
      double referenceMinConfidence) {
    return new DriftFinding(PAIR, 0, 1, 0, 0, 1.1, 1.1, true, 9, 8, 1.1, 80, 400, 1000, 20_000, 5, 5, 20, 20,
        minConfidence,
        referenceMinConfidence, recentBundle, baselineBundle, 0L, 21_600_000L);
  }

  /** One observation of {@code observed} (null: the pair is not published) after {@code minutes}. */
  private List<AlertEvent> after(long minutes, DriftFinding observed) {
    clock.advance(minutes * MINUTE);
    List<DriftFinding> entering = observed == null ? List.of() : List.of(observed);
    List<AlertEvent> step = machine.step(clock.millis(), ++version, entering, (pair, kind) -> observed);
    events.addAll(step);
    return step;
  }

  @Test
  void aShortBurstShorterThanTheDwellRaisesNothing() {
    after(0, finding(8, 3));
    after(10, finding(8, 3));
    after(4, finding(4, 3)); // √G² under 5: the entry condition stops before 15 minutes
    after(30, finding(2, 1));
    assertTrue(events.isEmpty());
    assertEquals(0, machine.size());
  }

  @Test
  void raisesOnceAfterTheDwellAndHoldsInsideTheHysteresisBand() {
    long start = clock.millis();
    after(0, finding(6, 2));
    assertTrue(after(14, finding(6, 2)).isEmpty()); // 14 min: still pending
    List<AlertEvent> raised = after(1, finding(6, 2)); // 15 min: dwell over
    assertEquals(1, raised.size());
    AlertEvent event = raised.get(0);
    assertEquals(AlertKind.EMERGING, event.kind());
    assertEquals(AlertTransition.RAISED, event.transition());
    assertEquals(start, event.sinceMillis());
    assertEquals(clock.millis(), event.atMillis());
    assertEquals(PAIR, event.pair());
    // between the exit and entry thresholds the alert neither repeats nor clears (no flapping)
    for (int i = 0; i < 20; i++) {
      after(5, i % 2 == 0 ? finding(4, 1.3) : finding(7, 2.5));
    }
    assertEquals(1, events.size());
    assertEquals(AlertMachine.State.ACTIVE, machine.track(PAIR, AlertKind.EMERGING).state());
  }

  @Test
  void clearsOnlyWhenTheExitHoldsForTheDwellThenCoolsDown() {
    after(0, finding(6, 2));
    after(15, finding(6, 2));
    assertEquals(1, events.size());
    long raisedAt = clock.millis();
    after(5, finding(2, 2)); // exit holds (√G² < 3) ...
    after(10, finding(4, 2)); // ... but not for 15 minutes: back to active
    assertEquals(AlertMachine.State.ACTIVE, machine.track(PAIR, AlertKind.EMERGING).state());
    after(5, finding(1, 1.1));
    after(14, finding(1, 1.1));
    assertEquals(1, events.size());
    List<AlertEvent> resolved = after(1, finding(1, 1.1));
    assertEquals(AlertTransition.RESOLVED, resolved.get(0).transition());
    assertEquals(raisedAt, resolved.get(0).sinceMillis());
    // within the 6 h cooldown a renewed rise raises nothing
    for (int i = 0; i < 11; i++) {
      after(30, finding(9, 3));
    }
    assertEquals(2, events.size());
    assertEquals(AlertMachine.State.COOLDOWN, machine.track(PAIR, AlertKind.EMERGING).state());
    // after the cooldown the rise needs a fresh dwell, and is then a new alert with a new id
    after(30, finding(9, 3)); // 6 h after the resolution: a new dwell starts
    assertEquals(2, events.size());
    List<AlertEvent> again = after(15, finding(9, 3));
    assertEquals(1, again.size());
    assertEquals(AlertTransition.RAISED, again.get(0).transition());
    assertNotEquals(events.get(0).id(), again.get(0).id());
  }

  @Test
  void aPairThatLeavesThePublishedTableClearsAfterTheDwell() {
    after(0, finding(-7, 0.3));
    after(20, finding(-7, 0.3));
    assertEquals(AlertKind.FADING, events.get(0).kind());
    after(5, null);
    after(15, null);
    assertEquals(2, events.size());
    assertEquals(AlertTransition.RESOLVED, events.get(1).transition());
    assertNull(events.get(1).evidence());
  }

  @Test
  void newBundleEntersAndExitsOnConfidence() {
    after(0, bundleFinding(true, true, 0.97)); // a bundle in both horizons is not new
    after(30, bundleFinding(true, true, 0.97));
    assertTrue(events.isEmpty());
    after(1, bundleFinding(true, false, 0.97));
    after(15, bundleFinding(true, false, 0.97));
    assertEquals(AlertKind.BUNDLE, events.get(0).kind());
    after(30, bundleFinding(false, false, 0.93)); // no longer a bundle, but above the 0.90 exit
    assertEquals(1, events.size());
    after(1, bundleFinding(false, false, 0.85));
    after(15, bundleFinding(false, false, 0.85));
    assertEquals(AlertTransition.RESOLVED, events.get(1).transition());
  }

  @Test
  void aSteadyNearCertainPairNeverRaisesANewBundle() {
    // its recent confidence hovers around the 0.95 bundle threshold, as it did in the reference period: not new
    for (int i = 0; i < 200; i++) {
      boolean above = i % 3 != 0;
      after(20, bundleFinding(above, i % 5 == 0, above ? 0.96 : 0.94, i % 5 == 0 ? 0.95 : 0.94));
    }
    assertTrue(events.isEmpty(), events.toString());
  }

  @Test
  void zeroDwellRaisesAtOnceAndIdsAreStable() {
    AlertMachine immediate = new AlertMachine(DriftSettings.defaults().withDwellAndCooldown(0, 0), "all");
    List<AlertEvent> first = immediate.step(1000, 1, List.of(finding(6, 2)), (p, k) -> finding(6, 2));
    assertEquals(1, first.size());
    AlertMachine twin = new AlertMachine(DriftSettings.defaults().withDwellAndCooldown(0, 0), "all");
    assertEquals(first, twin.step(1000, 1, List.of(finding(6, 2)), (p, k) -> finding(6, 2)));
  }
}
