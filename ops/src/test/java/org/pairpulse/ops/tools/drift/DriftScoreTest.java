package org.pairpulse.ops.tools.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/** Alerts against a hand-made drift truth: every class, delays, direction errors, bundle flaps, the delay ratio. */
class DriftScoreTest {
  static final long START = DriftStream.DEFAULT_START.toEpochMilli();
  static final long HOUR = Duration.ofHours(1).toMillis();
  static final long DAY = Duration.ofDays(1).toMillis();
  static final long FIRST = START + 1;
  static final long LAST = START + 7 * DAY - 1;

  static final List<DriftPlant> PLANTS = List.of(
      new DriftPlant(DriftShape.SUDDEN, new PlantedPair(PlantedKind.EMERGING, List.of("e1", "e2"), START + 2 * DAY,
          START + 5 * DAY, 7, 1, "sudden")),
      new DriftPlant(DriftShape.RIDE_ON, new PlantedPair(PlantedKind.EMERGING, List.of("r1", "r2"), START + 3 * DAY,
          START + 8 * DAY, 40, 1, "ride-on")),
      new DriftPlant(DriftShape.FADING, new PlantedPair(PlantedKind.FADING, List.of("f1", "f2"), START,
          START + 4 * DAY, 7, 1, "fading")),
      new DriftPlant(DriftShape.POPULARITY_SPIKE, new PlantedPair(PlantedKind.NOISE_POPULARITY, List.of("s"),
          START + 4 * DAY, START + 5 * DAY, 1, 1, "spike")),
      new DriftPlant(DriftShape.STEADY_BUNDLE, new PlantedPair(PlantedKind.BUNDLE, List.of("b1", "b2"), START,
          START + 7 * DAY, 90, Double.NaN, "bundle")));

  static AlertEvent raised(AlertKind kind, String a, String b, long at) {
    return AlertEvent.of(kind, AlertTransition.RAISED, "all", PairKey.of(a, b), at, at - 15 * 60_000, 1, null);
  }

  @Test
  void classifiesEveryAlert() {
    List<AlertEvent> alerts = new ArrayList<>(List.of(
        raised(AlertKind.EMERGING, "e1", "e2", START + DAY), // before the change: false
        raised(AlertKind.EMERGING, "e2", "e1", START + 2 * DAY + 90 * 60_000), // detection after 90 min
        AlertEvent.of(AlertKind.EMERGING, AlertTransition.RESOLVED, "all", PairKey.of("e1", "e2"), START + 3 * DAY,
            START + 2 * DAY, 2, null), // resolutions are not scored
        raised(AlertKind.EMERGING, "e1", "e2", START + 3 * DAY + HOUR), // repeat
        raised(AlertKind.FADING, "r1", "r2", START + 3 * DAY + 12 * HOUR), // ride-on pair up, read as fading
        raised(AlertKind.FADING, "e1", "e2", START + 5 * DAY + 2 * HOUR), // the sudden pair stopped: expected
        raised(AlertKind.EMERGING, "e1", "e2", START + 5 * DAY + 3 * HOUR), // after it stopped: wrong way
        raised(AlertKind.FADING, "f1", "f2", START + 3 * DAY), // before its end: false
        raised(AlertKind.FADING, "f1", "f2", START + 4 * DAY + 5 * HOUR), // detection after 300 min
        raised(AlertKind.EMERGING, "f2", "f1", START + 4 * DAY + 20 * HOUR), // after its end: wrong way
        raised(AlertKind.EMERGING, "s", "x", START + 4 * DAY + HOUR), // the spike item: false
        raised(AlertKind.FADING, "x", "y", START + 6 * DAY), // background: false
        raised(AlertKind.BUNDLE, "b1", "b2", START + DAY), // near-certain from the start: flap
        raised(AlertKind.BUNDLE, "r1", "r2", START + 4 * DAY), // first bundle on a new pair: not scored
        raised(AlertKind.BUNDLE, "r1", "r2", START + 6 * DAY))); // again: flap
    DriftScore score = DriftScore.score("quiet/seed 1", PLANTS, alerts, FIRST, LAST);
    assertEquals(3, score.changes().size());
    assertEquals(2, score.detected());
    assertEquals(90.0, score.changes().get(0).delayMinutes(), 1e-9);
    assertEquals(Double.NaN, score.changes().get(1).delayMinutes());
    assertEquals(300.0, score.changes().get(2).delayMinutes(), 1e-9);
    assertEquals(195.0, score.medianDelayMinutes(), 1e-9);
    List<DriftScore.AlertClass> classes = score.alerts().stream().map(DriftScore.ScoredAlert::alertClass).toList();
    assertEquals(List.of(DriftScore.AlertClass.FALSE, DriftScore.AlertClass.DETECTION, DriftScore.AlertClass.REPEAT,
        DriftScore.AlertClass.DIRECTION_ERROR, DriftScore.AlertClass.EXPECTED, DriftScore.AlertClass.DIRECTION_ERROR,
        DriftScore.AlertClass.FALSE, DriftScore.AlertClass.DETECTION, DriftScore.AlertClass.DIRECTION_ERROR,
        DriftScore.AlertClass.FALSE, DriftScore.AlertClass.FALSE, DriftScore.AlertClass.BUNDLE_FLAP,
        DriftScore.AlertClass.BUNDLE, DriftScore.AlertClass.BUNDLE_FLAP), classes);
    assertEquals(3, score.directionErrors());
    assertEquals(4, score.falseAlerts());
    assertEquals(2, score.bundleFlaps());
    assertEquals(1, score.directionErrors("quiet/seed 1", PLANTS.get(1)));
    assertEquals(4 / ((LAST - FIRST) / (double) DAY), score.falseAlertsPerSimulatedDay(), 1e-12);
  }

  @Test
  void delayRatioOverChangesBothDetectedWithTheRefreshAsFloor() {
    List<AlertEvent> ours = List.of(raised(AlertKind.EMERGING, "e1", "e2", START + 2 * DAY + 120 * 60_000),
        raised(AlertKind.EMERGING, "r1", "r2", START + 3 * DAY + 30 * 60_000),
        raised(AlertKind.FADING, "f1", "f2", START + 4 * DAY + 600 * 60_000));
    List<AlertEvent> exact = List.of(raised(AlertKind.EMERGING, "e1", "e2", START + 2 * DAY + 60 * 60_000),
        raised(AlertKind.EMERGING, "r1", "r2", START + 3 * DAY)); // at the change: the floor (15 min) counts
    DriftScore a = DriftScore.combine(List.of(DriftScore.score("busy/seed 2", PLANTS, ours, FIRST, LAST)));
    DriftScore b = DriftScore.score("busy/seed 2", PLANTS, exact, FIRST, LAST);
    // ratios 120/60 = 2 and 30/max(0, 15) = 2; the fading change is detected by pairpulse only
    assertEquals(2.0, a.medianDelayRatio(b, 15), 1e-12);
    String line = DriftBenchCommand.resultLine(a, b, 15);
    assertEquals("RESULT drift changes=3 detected=3/3 direction_errors=0 delay_ratio_vs_exact_median=2.00"
        + " delay_sim_minutes_median=120 false_alerts_per_sim_day=0.000 bundle_flaps=0", line);
  }

  @Test
  void combineAddsStreamsUp() {
    DriftScore one = DriftScore.score("quiet/seed 1", PLANTS, List.of(raised(AlertKind.FADING, "x", "y", START + DAY)),
        FIRST, LAST);
    DriftScore two = DriftScore.score("busy/seed 2", PLANTS, List.of(), FIRST, LAST);
    DriftScore both = DriftScore.combine(List.of(one, two));
    assertEquals(6, both.changes().size());
    assertEquals(1, both.falseAlerts());
    assertEquals(one.simulatedDays() * 2, both.simulatedDays(), 1e-12);
  }
}
