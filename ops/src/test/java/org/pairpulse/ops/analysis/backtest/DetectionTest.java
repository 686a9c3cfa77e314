package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.time.Instant;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/** Alerts against a hand-made ground truth: every class, the delays, the false-alert rate. */
class DetectionTest {
  static final long START = Instant.parse("2026-06-01T00:00:00Z").toEpochMilli();
  static final long HOUR = Duration.ofHours(1).toMillis();
  static final long DAY = Duration.ofDays(1).toMillis();

  static final ScenarioGroundTruth TRUTH = new ScenarioGroundTruth(ScenarioConfig.defaults().withDurationDays(8), List.of(
      new PlantedPair(PlantedKind.EMERGING, List.of("e1", "e2"), START + 3 * DAY + 19 * HOUR, START + 5 * DAY + 19 * HOUR,
          6, 1, "emerging"),
      new PlantedPair(PlantedKind.FADING, List.of("f1", "f2"), START, START + 5 * DAY, 5, 1, "fading"),
      new PlantedPair(PlantedKind.BUNDLE, List.of("h", "c"), START, START + 8 * DAY, 20, Double.NaN, "bundle"),
      new PlantedPair(PlantedKind.AFFINITY, List.of("h", "g"), START, START + 8 * DAY, 8, Double.NaN, "affinity")));

  static AlertEvent raised(AlertKind kind, String a, String b, long atMillis) {
    return AlertEvent.of(kind, AlertTransition.RAISED, "all", PairKey.of(a, b), atMillis, atMillis - 15 * 60_000, 1, null);
  }

  @Test
  void classifiesEveryAlertAndScoresThePlantedChanges() {
    long emergingAt = START + 3 * DAY + 19 * HOUR + 50 * 60_000; // 50 min late
    long fadingAt = START + 5 * DAY + 170 * 60_000; // 170 min late
    List<AlertEvent> alerts = List.of(
        raised(AlertKind.EMERGING, "e1", "e2", START + 2 * DAY), // before the change: false
        raised(AlertKind.EMERGING, "e2", "e1", emergingAt), // detection (pair order does not matter)
        AlertEvent.of(AlertKind.EMERGING, AlertTransition.RESOLVED, "all", PairKey.of("e1", "e2"), emergingAt + HOUR,
            emergingAt, 2, null), // resolutions are not scored
        raised(AlertKind.EMERGING, "e1", "e2", emergingAt + 10 * HOUR), // repeat
        raised(AlertKind.FADING, "f1", "f2", fadingAt), // detection
        raised(AlertKind.FADING, "e1", "e2", START + 5 * DAY + 21 * HOUR), // the emerging pair's end: expected
        raised(AlertKind.BUNDLE, "c", "h", START + DAY), // a planted bundle: expected
        raised(AlertKind.EMERGING, "g", "h", START + DAY), // a steady affinity: false
        raised(AlertKind.BUNDLE, "x", "y", START + DAY), // not planted: false
        raised(AlertKind.FADING, "x", "z", START + 6 * DAY)); // not planted: false
    Detection detection = Detection.score(TRUTH, alerts, START + 10, START + 8 * DAY - 10);
    assertEquals(2, detection.events().size());
    assertEquals(2, detection.detected());
    assertEquals(50.0, detection.events().get(0).delayMinutes(), 1e-9);
    assertEquals(170.0, detection.events().get(1).delayMinutes(), 1e-9);
    assertEquals(110.0, detection.medianDelayMinutes(), 1e-9);
    List<Detection.AlertClass> classes = detection.alerts().stream().map(Detection.ClassifiedAlert::alertClass).toList();
    assertEquals(List.of(Detection.AlertClass.FALSE, Detection.AlertClass.DETECTION, Detection.AlertClass.REPEAT,
        Detection.AlertClass.DETECTION, Detection.AlertClass.EXPECTED, Detection.AlertClass.EXPECTED,
        Detection.AlertClass.FALSE, Detection.AlertClass.FALSE, Detection.AlertClass.FALSE), classes);
    assertEquals(4, detection.falseAlerts());
    assertEquals(4 / ((8 * DAY - 20) / (double) DAY), detection.falseAlertsPerSimulatedDay(), 1e-12);
    assertEquals(START + 3 * DAY + 19 * HOUR, detection.firstChangeMillis().getAsLong());
  }

  @Test
  void theDaysAfterThePlantedChangesAreTheDayAfterEach() {
    // the shift benchmark's hit rates: [change, change + 24 h) for the emerging start and the fading end, united
    Detection detection = Detection.score(TRUTH, List.of(), START, START + 8 * DAY - 1);
    BacktestRun run = new BacktestRun("none", null, null, detection);
    List<long[]> windows = run.daysAfterChanges();
    assertEquals(2, windows.size());
    long emerging = START + 3 * DAY + 19 * HOUR;
    long fading = START + 5 * DAY;
    assertEquals(List.of(emerging, emerging + DAY, fading, fading + DAY),
        List.of(windows.get(0)[0], windows.get(0)[1], windows.get(1)[0], windows.get(1)[1]));
    assertFalse(BacktestRun.inWindows(windows, emerging - 1));
    assertTrue(BacktestRun.inWindows(windows, emerging));
    assertFalse(BacktestRun.inWindows(windows, emerging + DAY), "day 4 19:00 to day 5 00:00 is after both days");
    assertTrue(BacktestRun.inWindows(windows, fading + DAY - 1));
    assertFalse(BacktestRun.inWindows(windows, fading + DAY));
    // a replay without a planted change inside has no such days
    assertTrue(new BacktestRun("none", null, null, Detection.score(TRUTH, List.of(), START, START + DAY))
        .daysAfterChanges().isEmpty());
  }

  @Test
  void changesOutsideTheReplayAreNotCountedAndMissesHaveNoDelay() {
    // a replay of days 0..4 only: the fading change (day 5) is outside, the emerging one is missed
    Detection detection = Detection.score(TRUTH, List.of(raised(AlertKind.FADING, "e1", "e2", START + 4 * DAY)),
        START, START + 4 * DAY + HOUR);
    assertEquals(1, detection.events().size());
    assertFalse(detection.events().get(0).detected());
    assertTrue(Double.isNaN(detection.events().get(0).delayMinutes()));
    assertTrue(Double.isNaN(detection.medianDelayMinutes()));
    assertEquals(1, detection.falseAlerts(), "fading before the emerging pair's end is false");
  }
}
