package org.pairpulse.serve.internal;

import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.function.Supplier;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestStatus;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertDispatcher;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.alerts.AlertLeadership;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.table.PairTableSource;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The one entry point into serve's implementation, for {@link org.pairpulse.serve.ServeServer}: the segments, the
 * refresh loop on its watcher thread and the HTTP server, built from {@link Parts} and driven through six methods.
 * Nothing else in this package is public.
 */
public final class ServeRuntime implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(ServeRuntime.class);

  /**
   * What the wiring hands over.
   *
   * @param sources the segments given by name ({@code all} among them)
   * @param discovered segments found while running, or null
   * @param alertClock the clock of alert dwell and cooldown, or null for event time
   * @param leadership group mode's alert leadership, or null (one instance)
   */
  public record Parts(ServeConfig config, CohortFloor floor, Map<String, PairTableSource> sources,
      Supplier<Map<String, ? extends PairTableSource>> discovered, PrometheusMeterRegistry registry,
      ServeMeters meters, IngestStatus ingest, Supplier<SketchHealth> sketch, EvaluationStatus evaluation,
      EventClock wallClock, EventClock alertClock, AlertHistory history, AlertDispatcher dispatcher,
      GroupStatus group, AlertLeadership leadership) {}

  private final ServeConfig config;
  private final Segments segments;
  private final RefreshLoop refresh;
  private final ApiServer api;
  private final AlertLeadership leadership;
  private final AlertDispatcher dispatcher;
  private final ScheduledExecutorService watcher;

  public ServeRuntime(Parts p) {
    this.config = p.config();
    this.leadership = p.leadership();
    this.dispatcher = p.dispatcher();
    DriftSettings drift = config.driftSettings();
    this.segments = new Segments(config, drift, p.floor(), p.registry(), p.wallClock());
    p.sources().forEach((name, source) -> segments.add(name, source, null));
    Suggester suggester = new Suggester(config.intValue(ServeConfig.MAX_NEIGHBOURS));
    this.refresh = new RefreshLoop(segments, p.floor(), suggester, p.discovered(), p.alertClock(), p.dispatcher(),
        p.group(), p.leadership(), p.meters());
    this.api = new ApiServer(new ApiServer.Deps(config, segments, p.floor(), drift, suggester,
        p.meters(), p.registry(), p.history(), new StatusRoutes.Sources(p.ingest(), p.sketch(), p.evaluation(),
        p.group(), p.history(), p.wallClock())));
    this.watcher = Executors.newSingleThreadScheduledExecutor(r -> {
      Thread t = new Thread(r, "pairpulse-serve-watch");
      t.setDaemon(true);
      return t;
    });
  }

  /** Processes the newest tables, starts listening on {@code serve.host}:{@code serve.port}, starts the watcher. */
  public int start() {
    catchUp();
    int port = api.start(config.string(ServeConfig.HOST), config.intValue(ServeConfig.PORT));
    long every = config.longValue(ServeConfig.WATCH_MILLIS);
    watcher.scheduleWithFixedDelay(this::watchOnce, every, every, TimeUnit.MILLISECONDS);
    return port;
  }

  private void watchOnce() {
    try {
      catchUp();
    } catch (RuntimeException e) {
      LOG.error("processing a new pair table failed; serving the previous one", e);
    }
  }

  /** One round of the refresh loop now. */
  public void catchUp() {
    refresh.catchUp();
  }

  /** The API's routes, "METHOD path". */
  public List<String> routes() {
    return api.routes();
  }

  /** The served segments, {@code all} first, then by name. */
  public List<String> segmentNames() {
    return segments.names();
  }

  /** The newest floored table of a segment, if served. */
  public Optional<FlooredTable> view(String segment) {
    return Optional.ofNullable(segments.get(segment)).map(SegmentState::view);
  }

  /** Stops the watcher, the group's alert leadership, the HTTP server and the alert dispatcher, in that order. */
  @Override
  public void close() {
    watcher.shutdownNow();
    if (leadership != null) {
      leadership.close();
    }
    api.close();
    dispatcher.close();
  }
}
