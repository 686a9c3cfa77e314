package org.pairpulse.serve.internal;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import java.util.Collection;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentSkipListMap;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableSource;
import org.pairpulse.sketch.time.EventClock;

/**
 * The served segments by name, {@value ServeServer#ALL} first, then by name: read by request threads, added to
 * by the refresh loop only. Adding a segment gives it a drift monitor, a trend history and its table gauges.
 */
final class Segments {
  private final Map<String, SegmentState> byName = new ConcurrentSkipListMap<>(Segments::order);
  private final ServeConfig config;
  private final DriftSettings drift;
  private final CohortFloor floor;
  private final MeterRegistry registry;
  private final EventClock wallClock;

  Segments(ServeConfig config, DriftSettings drift, CohortFloor floor, MeterRegistry registry, EventClock wallClock) {
    this.config = config;
    this.drift = drift;
    this.floor = floor;
    this.registry = registry;
    this.wallClock = wallClock;
  }

  private static int order(String a, String b) {
    if (a.equals(b)) {
      return 0;
    }
    return a.equals(ServeServer.ALL) ? -1 : b.equals(ServeServer.ALL) ? 1 : a.compareTo(b);
  }

  /** The segment, or null when it is not served. */
  SegmentState get(String name) {
    return byName.get(name);
  }

  boolean contains(String name) {
    return byName.containsKey(name);
  }

  Collection<SegmentState> all() {
    return byName.values();
  }

  List<String> names() {
    return List.copyOf(byName.keySet());
  }

  /**
   * Serves a new segment with an empty view until the refresh loop processes its first table.
   *
   * @param alertState alert state taken over from the group's previous leader, or null
   */
  void add(String name, PairTableSource source, DriftMonitor.AlertState alertState) {
    TrendHistory trend = new TrendHistory(config.intValue(ServeConfig.TREND_POINTS),
        config.intValue(ServeConfig.TREND_PAIRS), config.intValue(ServeConfig.TREND_ITEMS),
        config.intValue(ServeConfig.TREND_PINNED));
    DriftMonitor monitor = new DriftMonitor(drift, name);
    if (alertState != null) {
      monitor.restore(alertState);
    }
    SegmentState state = new SegmentState(name, source, monitor, trend, FlooredTable.of(PairTable.empty(), floor));
    Gauge.builder("pairpulse.pair.table.age", state, s -> ageSeconds(s, wallClock)).baseUnit("seconds")
        .tag("segment", name).description("Time since the served pair table was published").register(registry);
    Gauge.builder("pairpulse.pair.table.version", state, s -> s.view().version()).tag("segment", name)
        .description("Version of the served pair table").register(registry);
    Gauge.builder("pairpulse.pair.table.pairs", state, s -> s.view().publishedPairs()).tag("segment", name)
        .tag("state", "published").description("Pair statistics over all horizons, by cohort-floor outcome")
        .register(registry);
    Gauge.builder("pairpulse.pair.table.pairs", state, s -> s.view().suppressedPairs()).tag("segment", name)
        .tag("state", "suppressed").register(registry);
    byName.put(name, state);
  }

  private static double ageSeconds(SegmentState s, EventClock clock) {
    FlooredTable view = s.view();
    return view.version() == 0 ? Double.NaN : (clock.millis() - view.table().publishedAtMillis()) / 1000.0;
  }
}
