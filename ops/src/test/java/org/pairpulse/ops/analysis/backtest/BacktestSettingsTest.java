package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.time.Duration;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.horizon.HorizonSpec;

/** The builder: its defaults, its copy of settings, and the checks it leaves to {@code build()}. */
class BacktestSettingsTest {
  static final long MINUTE = 60_000L;

  @Test
  void theBuilderStartsAtTheTableDefaults() {
    BacktestSettings settings = BacktestSettings.builder().build();
    assertEquals(BacktestSettings.DEFAULT_REFRESH_EVERY_MILLIS, settings.refreshEveryMillis());
    assertEquals(BacktestSettings.DEFAULT_SUMMARY_EVERY_MILLIS, settings.summaryEveryMillis());
    assertEquals(BacktestSettings.DEFAULT_SUMMARY_TOP, settings.summaryTop());
    assertEquals(EngineConfig.defaults(), settings.engine());
    assertEquals(BacktestSettings.replayLimits(), settings.limits());
    assertEquals(settings, BacktestSettings.defaults());
  }

  @Test
  void toBuilderCopiesEverySetting() {
    BacktestSettings changed = BacktestSettings.builder()
        .engine(EngineConfig.builder().trackedPairCapacity(1024).build()).cohortFloor(7).refreshEveryMillis(MINUTE)
        .summaryEveryMillis(2 * MINUTE).summaryTop(3).evaluation(null).build();
    assertEquals(changed, changed.toBuilder().build());
    assertEquals(BacktestSettings.defaults(), BacktestSettings.defaults().toBuilder().build());
    assertNull(changed.evaluation());
  }

  /** As the withers did: a refresh interval raises the summary interval set before it, not one set after it. */
  @ParameterizedTest
  @ValueSource(longs = {MINUTE, 60 * MINUTE, 12 * 60 * MINUTE, 24 * 60 * MINUTE})
  void aRefreshIntervalRaisesTheSummaryIntervalSetBeforeIt(long refreshMillis) {
    BacktestSettings raised = BacktestSettings.builder().refreshEveryMillis(refreshMillis).build();
    assertEquals(Math.max(refreshMillis, BacktestSettings.DEFAULT_SUMMARY_EVERY_MILLIS), raised.summaryEveryMillis());
    BacktestSettings given = BacktestSettings.builder().refreshEveryMillis(refreshMillis)
        .summaryEveryMillis(BacktestSettings.DAY_MILLIS).build();
    assertEquals(BacktestSettings.DAY_MILLIS, given.summaryEveryMillis());
    // a summary interval below the default refresh interval is fine once the refresh interval is below it too
    BacktestSettings fine = BacktestSettings.builder().summaryEveryMillis(MINUTE).refreshEveryMillis(MINUTE).build();
    assertEquals(MINUTE, fine.summaryEveryMillis());
  }

  @Test
  void buildChecksTheSettingsTogether() {
    IllegalArgumentException shortSummary = assertThrows(IllegalArgumentException.class,
        () -> BacktestSettings.builder().summaryEveryMillis(MINUTE).build());
    assertEquals("summary interval (60000 ms) must not be shorter than the refresh interval (300000 ms)",
        shortSummary.getMessage());
    IllegalArgumentException oddRefresh = assertThrows(IllegalArgumentException.class,
        () -> BacktestSettings.builder().refreshEveryMillis(Duration.ofMinutes(7).toMillis()).build());
    assertEquals("refresh interval must be at least 1 s and divide a day (e.g. 1m, 5m, 10m, 1h), got 420000 ms",
        oddRefresh.getMessage());
    IllegalArgumentException top = assertThrows(IllegalArgumentException.class,
        () -> BacktestSettings.builder().summaryTop(10_001).build());
    assertEquals("summaryTop must be in 0..10000, got 10001", top.getMessage());
    EngineConfig noRecent = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("short", Duration.ofHours(3)), HorizonSpec.DAY)).burstHorizon("short").build();
    IllegalArgumentException drift = assertThrows(IllegalArgumentException.class,
        () -> BacktestSettings.builder().engine(noRecent).build());
    assertEquals("drift horizon 'recent' is not an engine horizon (nor 'tracking', the tracking decay)",
        drift.getMessage());
    EngineConfig noDay = EngineConfig.builder().horizons(List.of(HorizonSpec.RECENT, HorizonSpec.BASELINE)).build();
    IllegalArgumentException evaluation = assertThrows(IllegalArgumentException.class,
        () -> BacktestSettings.builder().engine(noDay).evaluation(EvaluationSettings.defaults().withHorizon("day"))
            .build());
    assertEquals("evaluation horizon 'day' is not an engine horizon", evaluation.getMessage());
    // the same settings in either order: build() sees them together
    assertEquals(BacktestSettings.builder().engine(noDay).evaluation(EvaluationSettings.defaults().withHorizon("recent"))
        .build(), BacktestSettings.builder().evaluation(EvaluationSettings.defaults().withHorizon("recent"))
        .engine(noDay).build());
    assertThrows(NullPointerException.class, () -> BacktestSettings.builder().front(null).build());
  }
}
