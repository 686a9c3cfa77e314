package org.pairpulse.ops.tools.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.time.Duration;
import java.time.Instant;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.analysis.backtest.Backtest;
import org.pairpulse.ops.analysis.backtest.BacktestResult;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.sketch.engine.EngineConfig;

/**
 * pairpulse's own drift detection (engine, cohort floor, drift monitor, alert machine: the backtest's parts) on the
 * drift family's quiet stream, every shape on its own items over 7 days: each planted change is found, in its
 * direction, within a day, and its alerts say what changed; a planted fact that is no change (popularity spike, rare
 * trap, steady pair, steady bundle, weekend traffic) raises nothing on its items; no direction error, no bundle flap;
 * false alerts on background pairs within the family's budget of 0.5 a simulated day. Default drift settings; the
 * engine tracks 4,096 pairs (not 16,384) and refreshes every 30 minutes, so that the replay stays near a minute.
 * {@code bench drift} runs the full-size streams and the exact reference detector.
 */
class EngineDriftFamilyTest {

  @Test
  void findsEachShapeInItsDirectionAndNothingElse() {
    DriftStream stream = DriftFamily.stream(DriftFamily.DEFAULT_SEED, TrafficLevel.QUIET, DriftFamily.DEFAULT_DAYS);
    BacktestSettings settings = BacktestSettings.builder()
        .engine(EngineConfig.builder().trackedPairCapacity(4096).trackedItemCapacity(4096).build())
        .refreshEveryMillis(Duration.ofMinutes(30).toMillis())
        .summaryEveryMillis(BacktestSettings.DAY_MILLIS).evaluation(null).build();
    Backtest backtest = new Backtest(settings, null, null);
    for (ReplayBasket basket : (Iterable<ReplayBasket>) stream::iterator) {
      backtest.accept(basket);
    }
    BacktestResult result = backtest.finish();
    DriftScore score = DriftScore.score(stream.name(), stream.truth(), result.alerts(), result.firstEventMillis(),
        result.lastEventMillis());
    List<String> raised = new ArrayList<>();
    for (AlertEvent alert : result.alerts()) {
      if (alert.transition() == AlertTransition.RAISED) {
        raised.add(alert.kind().wireName() + " " + alert.pair() + " at " + Instant.ofEpochMilli(alert.atMillis())
            + ": " + alert.summary());
      }
    }
    String alarms = String.join("\n", raised);
    assertEquals(0, score.directionErrors(), alarms);
    assertEquals(0, score.bundleFlaps(), alarms);
    assertTrue(score.falseAlertsPerSimulatedDay() <= 0.5, "over the budget:\n" + alarms);
    long changes = java.util.Arrays.stream(DriftShape.values()).filter(DriftShape::isChange).count();
    assertEquals(changes, score.changes().size());
    for (DriftScore.Change change : score.changes()) {
      assertTrue(change.detected(), change.plant() + " not found:\n" + alarms);
      assertTrue(change.delayMinutes() <= 24 * 60, change.plant() + " not within a day:\n" + alarms);
    }
    for (AlertEvent alert : result.alerts()) {
      if (alert.transition() == AlertTransition.RAISED && alert.kind() != AlertKind.BUNDLE) {
        assertNotNull(alert.change(), "an emerging or fading alert says what changed: " + alert);
      }
    }
    for (DriftScore.ScoredAlert alert : score.alerts()) {
      assertTrue(alert.shape() == null || alert.shape().isChange(),
          "an alert on the planted " + alert.shape() + ":\n" + alarms);
    }
  }
}
