package org.pairpulse.ops.analysis.backtest;

import java.time.Duration;
import java.util.Objects;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.time.EventClock;

/**
 * Everything a backtest runs with. Immutable.
 *
 * <table>
 *   <caption>Settings</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>engine</td><td>{@link EngineConfig#defaults()}</td><td>the engine, as in production</td></tr>
 *   <tr><td>drift</td><td>{@link DriftSettings#defaults()}</td><td>drift thresholds, dwell and cooldown</td></tr>
 *   <tr><td>cohortFloor</td><td>50</td><td>distinct baskets behind any published statistic (alerts, summaries and the
 *       evaluation read the floored table, as serve does)</td></tr>
 *   <tr><td>refreshEveryMillis</td><td>5 min</td><td>event time between refreshes; must divide a day. Serve refreshes every
 *       2 s of wall clock, which is near real time; 5 min of event time bounds alert timing to 5 min and keeps a
 *       week's replay at about 2,000 refreshes</td></tr>
 *   <tr><td>summaryEveryMillis</td><td>6 h</td><td>event time between pair-table summaries in the output</td></tr>
 *   <tr><td>summaryTop</td><td>10</td><td>pairs per horizon in a summary</td></tr>
 *   <tr><td>evaluation</td><td>{@link EvaluationSettings#defaults()}</td><td>the test-then-train evaluation; null: none</td></tr>
 *   <tr><td>front</td><td>{@link FrontSettings#defaults()}</td><td>ingest's lateness, dedupe and line-item assembly</td></tr>
 *   <tr><td>limits</td><td>{@link #replayLimits()}</td><td>ingest's event limits, without the wall-clock checks</td></tr>
 * </table>
 *
 * @param engine the engine configuration
 * @param drift the drift settings
 * @param cohortFloor the cohort floor in distinct baskets
 * @param refreshEveryMillis event time between refreshes
 * @param summaryEveryMillis event time between summaries
 * @param summaryTop pairs per horizon in a summary
 * @param evaluation the evaluation settings, or null for no evaluation
 * @param front ingest's front settings
 * @param limits ingest's event limits
 */
public record BacktestSettings(EngineConfig engine, DriftSettings drift, double cohortFloor, long refreshEveryMillis,
    long summaryEveryMillis, int summaryTop, EvaluationSettings evaluation, FrontSettings front, EventLimits limits) {

  public static final long DAY_MILLIS = Duration.ofDays(1).toMillis();
  public static final long DEFAULT_REFRESH_EVERY_MILLIS = Duration.ofMinutes(5).toMillis();
  public static final long DEFAULT_SUMMARY_EVERY_MILLIS = Duration.ofHours(6).toMillis();
  public static final int DEFAULT_SUMMARY_TOP = 10;

  public BacktestSettings {
    Objects.requireNonNull(engine, "engine");
    Objects.requireNonNull(drift, "drift");
    Objects.requireNonNull(front, "front");
    Objects.requireNonNull(limits, "limits");
    new CohortFloor(cohortFloor, engine.horizons()); // validates the floor
    if (refreshEveryMillis < 1000 || DAY_MILLIS % refreshEveryMillis != 0) {
      throw new IllegalArgumentException("refresh interval must be at least 1 s and divide a day (e.g. 1m, 5m, 10m,"
          + " 1h), got " + refreshEveryMillis + " ms");
    }
    if (summaryEveryMillis < refreshEveryMillis) {
      throw new IllegalArgumentException("summary interval (" + summaryEveryMillis
          + " ms) must not be shorter than the refresh interval (" + refreshEveryMillis + " ms)");
    }
    if (summaryTop < 0 || summaryTop > 10_000) {
      throw new IllegalArgumentException("summaryTop must be in 0..10000, got " + summaryTop);
    }
    for (String horizon : new String[] {drift.recentHorizon(), drift.referenceHorizon()}) {
      if (engine.horizons().stream().noneMatch(h -> h.name().equals(horizon))
          && !horizon.equals(EngineConfig.TRACKING_HORIZON_NAME)) {
        throw new IllegalArgumentException("drift horizon '" + horizon + "' is not an engine horizon (nor '"
            + EngineConfig.TRACKING_HORIZON_NAME + "', the tracking decay)");
      }
    }
    if (evaluation != null && engine.horizons().stream().noneMatch(h -> h.name().equals(evaluation.horizon()))) {
      throw new IllegalArgumentException("evaluation horizon '" + evaluation.horizon() + "' is not an engine horizon");
    }
  }

  /** The defaults of the table above. */
  public static BacktestSettings defaults() {
    return builder().build();
  }

  /** A builder holding {@link #defaults()}. */
  public static Builder builder() {
    return new Builder();
  }

  /** A builder holding these settings. */
  public Builder toBuilder() {
    return new Builder().engine(engine).drift(drift).cohortFloor(cohortFloor).refreshEveryMillis(refreshEveryMillis)
        .summaryEveryMillis(summaryEveryMillis).summaryTop(summaryTop).evaluation(evaluation).front(front)
        .limits(limits);
  }

  /**
   * ingest's default limits with the wall-clock plausibility checks off ({@code max.future.ms} and
   * {@code max.past.ms} unbounded): a replay is recorded history, and its result must not depend on the day it
   * runs. The other checks (items per basket, id lengths, attributes) are ingest's defaults.
   */
  public static EventLimits replayLimits() {
    EventLimits defaults = EventLimits.defaults(EventClock.system());
    return new EventLimits(defaults.maxBasketItems(), defaults.maxIdChars(), Long.MAX_VALUE, Long.MAX_VALUE,
        defaults.maxAttributes(), defaults.clock());
  }

  /** The cohort floor over the engine's horizons. */
  public CohortFloor floor() {
    return new CohortFloor(cohortFloor, engine.horizons());
  }

  /** Settings that start at the defaults; {@link #build()} checks them together. */
  public static final class Builder {
    private EngineConfig engine = EngineConfig.defaults();
    private DriftSettings drift = DriftSettings.defaults();
    private double cohortFloor = CohortFloor.DEFAULT_MIN_BASKETS;
    private long refreshEveryMillis = DEFAULT_REFRESH_EVERY_MILLIS;
    private long summaryEveryMillis = DEFAULT_SUMMARY_EVERY_MILLIS;
    private int summaryTop = DEFAULT_SUMMARY_TOP;
    private EvaluationSettings evaluation = EvaluationSettings.defaults();
    private FrontSettings front = FrontSettings.defaults();
    private EventLimits limits = replayLimits();

    private Builder() {}

    public Builder engine(EngineConfig value) {
      this.engine = value;
      return this;
    }

    public Builder drift(DriftSettings value) {
      this.drift = value;
      return this;
    }

    /** The cohort floor in distinct baskets. */
    public Builder cohortFloor(double value) {
      this.cohortFloor = value;
      return this;
    }

    /**
     * Event time between refreshes; raises the summary interval set so far to at least this value (a summary
     * interval set afterwards is taken as given).
     */
    public Builder refreshEveryMillis(long value) {
      this.refreshEveryMillis = value;
      this.summaryEveryMillis = Math.max(value, summaryEveryMillis);
      return this;
    }

    public Builder summaryEveryMillis(long value) {
      this.summaryEveryMillis = value;
      return this;
    }

    public Builder summaryTop(int value) {
      this.summaryTop = value;
      return this;
    }

    /** The evaluation settings; null: no evaluation. */
    public Builder evaluation(EvaluationSettings value) {
      this.evaluation = value;
      return this;
    }

    public Builder front(FrontSettings value) {
      this.front = value;
      return this;
    }

    public Builder limits(EventLimits value) {
      this.limits = value;
      return this;
    }

    /** @throws IllegalArgumentException when a setting is out of its range or they disagree (see the record's checks) */
    public BacktestSettings build() {
      return new BacktestSettings(engine, drift, cohortFloor, refreshEveryMillis, summaryEveryMillis, summaryTop,
          evaluation, front, limits);
    }
  }
}
