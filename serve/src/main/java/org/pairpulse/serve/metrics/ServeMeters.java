package org.pairpulse.serve.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import java.time.Duration;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.function.Supplier;
import org.pairpulse.serve.SketchHealth;

/**
 * The meters serve registers (Prometheus names in brackets, as {@code /metrics} shows them).
 * {@code /metrics} scrapes the whole shared registry, so the ingest pipeline's own meters (rates,
 * lag, dead letters by reason: {@code pairpulse_ingest_*}) appear there when the wiring passes the
 * same registry to both; serve does not mirror them (same names would clash).
 *
 * <ul>
 *   <li>sketch, from {@link SketchHealth}: tracked-table fill [pairpulse_sketch_fill_ratio{table}],
 *       state size [pairpulse_sketch_state_bytes], ε·W per horizon
 *       [pairpulse_sketch_error_bound{horizon, counts}], N per horizon [pairpulse_sketch_baskets{horizon}];</li>
 *   <li>pair tables: age [pairpulse_pair_table_age_seconds{segment}], version
 *       [pairpulse_pair_table_version{segment}], published and suppressed pairs
 *       [pairpulse_pair_table_pairs{segment, state}], refresh duration [pairpulse_refresh_duration_seconds]
 *       (recorded by the refresher through {@link #refreshTimer});</li>
 *   <li>serving: suggestion latency histogram [pairpulse_suggestion_latency_seconds], response cache
 *       [pairpulse_response_cache_total{result}], error responses [pairpulse_http_errors_total{status}];</li>
 *   <li>alerts: events [pairpulse_alerts_total{kind, transition}], deliveries
 *       [pairpulse_alert_deliveries_total{sink, outcome}].</li>
 * </ul>
 */
public final class ServeMeters {
  private final MeterRegistry registry;
  private final Timer suggestionLatency;
  private final Counter cacheHits;
  private final Counter cacheMisses;
  private final Map<Integer, Counter> errors = new ConcurrentHashMap<>();
  private final Set<String> sketchHorizons = ConcurrentHashMap.newKeySet();
  private final Supplier<SketchHealth> sketch;

  /**
   * @param registry the shared registry ({@code /metrics} scrapes it)
   * @param sketch the newest sketch health (likewise)
   */
  public ServeMeters(MeterRegistry registry, Supplier<SketchHealth> sketch) {
    this.registry = registry;
    this.sketch = sketch;
    this.suggestionLatency = Timer.builder("pairpulse.suggestion.latency")
        .description("Time to answer a suggestion request, cache hits included (excludes the network)")
        .publishPercentileHistogram().minimumExpectedValue(Duration.ofNanos(10_000))
        .maximumExpectedValue(Duration.ofSeconds(2)).register(registry);
    this.cacheHits = Counter.builder("pairpulse.response.cache").tag("result", "hit")
        .description("Responses served from or added to the per-version cache").register(registry);
    this.cacheMisses = Counter.builder("pairpulse.response.cache").tag("result", "miss").register(registry);
    refreshTimer(registry);
    Gauge.builder("pairpulse.sketch.fill", this, m -> m.sketch.get().pairFill()).baseUnit("ratio").tag("table", "pairs")
        .description("Tracked-table entries / capacity").register(registry);
    Gauge.builder("pairpulse.sketch.fill", this, m -> m.sketch.get().itemFill()).baseUnit("ratio").tag("table", "items")
        .register(registry);
    Gauge.builder("pairpulse.sketch.state", this, m -> m.sketch.get().stateBytes()).baseUnit("bytes")
        .description("Heap bytes of sketches and tracked tables").register(registry);
  }

  /**
   * The refresh-duration timer [pairpulse_refresh_duration_seconds]: the refresher (which turns
   * engine state into pair tables, in the wiring) records each refresh here.
   */
  public static Timer refreshTimer(MeterRegistry registry) {
    return Timer.builder("pairpulse.refresh.duration").description("Time to build and publish one pair table")
        .register(registry);
  }

  public Timer suggestionLatency() {
    return suggestionLatency;
  }

  public void cacheHit() {
    cacheHits.increment();
  }

  public void cacheMiss() {
    cacheMisses.increment();
  }

  public void error(int status) {
    errors.computeIfAbsent(status, s -> Counter.builder("pairpulse.http.errors").tag("status", Integer.toString(s))
        .description("Error responses by status").register(registry)).increment();
  }

  /** Registers meters for horizons seen for the first time (called by the table watcher). */
  public void discover() {
    for (SketchHealth.HorizonHealth h : sketch.get().horizons()) {
      String name = h.name();
      if (sketchHorizons.add(name)) {
        Gauge.builder("pairpulse.sketch.error.bound", this, m -> horizon(m, name).pairErrorBound()).tag("horizon", name)
            .tag("counts", "pairs").description("ε·W: the most a sketched count may overcount").register(registry);
        Gauge.builder("pairpulse.sketch.error.bound", this, m -> horizon(m, name).itemErrorBound()).tag("horizon", name)
            .tag("counts", "items").register(registry);
        Gauge.builder("pairpulse.sketch.baskets", this, m -> horizon(m, name).baskets()).tag("horizon", name)
            .description("N: (weighted) baskets in the horizon").register(registry);
      }
    }
  }

  private static SketchHealth.HorizonHealth horizon(ServeMeters m, String name) {
    for (SketchHealth.HorizonHealth h : m.sketch.get().horizons()) {
      if (h.name().equals(name)) {
        return h;
      }
    }
    return new SketchHealth.HorizonHealth(name, Double.NaN, Double.NaN, Double.NaN);
  }

  public MeterRegistry registry() {
    return registry;
  }
}
