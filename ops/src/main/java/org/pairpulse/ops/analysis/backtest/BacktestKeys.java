package org.pairpulse.ops.analysis.backtest;

import java.util.LinkedHashMap;
import java.util.Map;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.Range;
import org.apache.kafka.common.config.ConfigDef.Type;

/**
 * The backtest's own keys ({@code backtest.*}, the same as its options), defined with Kafka's {@link ConfigDef};
 * {@link BacktestSettings} checks the rules between them (the refresh interval divides a day, ...).
 */
public final class BacktestKeys {
  public static final String REFRESH_EVERY_MS = "backtest.refresh.every.ms";
  public static final String SUMMARY_EVERY_MS = "backtest.summary.every.ms";
  public static final String SUMMARY_TOP = "backtest.summary.top";

  /** Earlier spellings, each to its key. */
  public static final Map<String, String> RENAMED = Map.of("backtest.refreshEveryMillis", REFRESH_EVERY_MS,
      "backtest.summaryEveryMillis", SUMMARY_EVERY_MS, "backtest.summaryTop", SUMMARY_TOP);

  public static final ConfigDef DEFINITION = new ConfigDef()
      .define(REFRESH_EVERY_MS, Type.LONG, BacktestSettings.DEFAULT_REFRESH_EVERY_MILLIS, Range.atLeast(1000),
          Importance.MEDIUM, "event time between refreshes (--refresh-every); must divide a day")
      .define(SUMMARY_EVERY_MS, Type.LONG, BacktestSettings.DEFAULT_SUMMARY_EVERY_MILLIS, Range.atLeast(1000),
          Importance.LOW, "event time between pair-table summaries in the output (--summary-every); not shorter than"
              + " the refresh interval")
      .define(SUMMARY_TOP, Type.INT, BacktestSettings.DEFAULT_SUMMARY_TOP, Range.between(0, 10_000), Importance.LOW,
          "pairs per horizon in a summary");

  private BacktestKeys() {}

  /**
   * Sets on {@code settings} the backtest keys of {@code given} (others are ignored); a key not given sets
   * {@code base}'s value, except that a summary interval not given is never shorter than the refresh interval.
   */
  static void apply(BacktestSettings.Builder settings, BacktestSettings base, Map<String, ?> given) {
    Map<String, Object> ours = new LinkedHashMap<>(given);
    ours.keySet().retainAll(DEFINITION.names());
    Map<String, Object> v = DEFINITION.parse(ours);
    v.keySet().retainAll(ours.keySet());
    long refreshEveryMillis = (Long) v.getOrDefault(REFRESH_EVERY_MS, base.refreshEveryMillis());
    // a summary interval not given follows a longer refresh interval up, as the builder's does
    long summaryEveryMillis = v.containsKey(SUMMARY_EVERY_MS) ? (Long) v.get(SUMMARY_EVERY_MS)
        : Math.max(base.summaryEveryMillis(), refreshEveryMillis);
    settings.refreshEveryMillis(refreshEveryMillis).summaryEveryMillis(summaryEveryMillis)
        .summaryTop((Integer) v.getOrDefault(SUMMARY_TOP, base.summaryTop()));
  }
}
