package org.pairpulse.serve;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.URI;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.function.Supplier;
import java.util.regex.Pattern;
import org.pairpulse.serve.alerts.AlertDispatcher;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.alerts.AlertLeadership;
import org.pairpulse.serve.alerts.AlertSink;
import org.pairpulse.serve.alerts.KafkaAlertSink;
import org.pairpulse.serve.alerts.WebhookAlertSink;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.internal.ServeRuntime;
import org.pairpulse.serve.metrics.GroupMeters;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.table.PairTableSource;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * serve: the HTTP API, the dashboard, {@code /metrics}, drift alerts. Reads pair tables, never
 * writes state.
 *
 * <h2>Use</h2>
 * <pre>{@code
 * PairTableHolder tables = new PairTableHolder();               // the refresher publishes into it
 * PrometheusMeterRegistry registry = ...;                       // shared with ingest
 * try (ServeServer server = ServeServer.builder()
 *     .config(ServeConfig.defaults())
 *     .segment("all", tables)
 *     .horizons(engineConfig.horizons())
 *     .registry(registry)
 *     .ingestStatus(pipeline::health)
 *     .sketchHealth(() -> newestSketchHealth)
 *     .build().start()) {
 *   ...
 * }
 * }</pre>
 *
 * <h2>Segments</h2>
 * Segment {@value #ALL} is required; more can be given by name ({@link Builder#segment}) or discovered while
 * running ({@link Builder#discoveredSegments}: ingest's per-segment tables, {@code attribute=value}, appear as
 * baskets with new values arrive). The watcher adds a discovered segment once its table's N passes the cohort
 * floor in some horizon: before that the segment is not even named (a segment's existence says that some
 * basket carried its value). From then on it is served like the others (API {@code segment} parameter,
 * dashboard, drift, alerts, meters), every statistic behind the floor, also when N falls under it again.
 * Names follow {@link #SEGMENT_NAME}.
 *
 * <h2>Threads</h2>
 * Requests run on Jetty's pool and read each segment's newest floored table through a volatile
 * reference: no locks, nothing shared with ingest, so requests never block ingest. One watcher
 * thread looks for new table versions every {@code serve.watch.ms}: per new version it builds the
 * floored view, records a trend point, runs drift detection and the alert state machine, and hands
 * alert events to the dispatcher thread, which feeds the sinks (Kafka, webhook) asynchronously.
 *
 * <h2>Time</h2>
 * Table ages use the wall clock (default {@link EventClock#system()}). The alert state machine's
 * dwell and cooldown run on the alert clock; by default that is event time, the watermark of the
 * observed table (so an accelerated replay or demo keeps its alert timing), or any injected clock.
 */
public final class ServeServer implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(ServeServer.class);
  /** The segment that is always present: every basket. */
  public static final String ALL = "all";
  /**
   * Valid segment names: a plain lower-case name ({@code all}, {@code web}), or {@code attribute=value} as ingest
   * names the segment of a basket attribute's value (attribute up to 32, value up to 64 plain characters).
   */
  public static final Pattern SEGMENT_NAME = Pattern.compile(
      "[a-z0-9][a-z0-9_.-]{0,63}|[A-Za-z0-9][A-Za-z0-9_.-]{0,31}=[A-Za-z0-9][A-Za-z0-9_.:+-]{0,63}");

  private final ServeConfig config;
  private final AlertHistory history;
  private final PrometheusMeterRegistry registry;
  private final GroupStatus group;
  private final AlertDispatcher dispatcher;
  private final ServeRuntime runtime;
  private final CohortFloor floor;
  private int port = -1;

  private ServeServer(Builder b) {
    this.config = b.config;
    this.floor = new CohortFloor(config.doubleValue(ServeConfig.COHORT_FLOOR), b.horizons);
    this.registry = b.registry != null ? b.registry : new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    this.history = new AlertHistory(config.intValue(ServeConfig.ALERT_HISTORY));
    this.group = b.group;
    ServeMeters meters = new ServeMeters(registry, b.sketchHealth);
    this.dispatcher = new AlertDispatcher(history, sinks(config, b.sinks, registry), registry);
    GroupMeters.register(registry, group, b.leadership != null);
    this.runtime = new ServeRuntime(new ServeRuntime.Parts(config, floor, b.sources, b.discovered, registry, meters,
        b.ingestStatus, b.sketchHealth, b.evaluation, b.wallClock, b.alertClock, history, dispatcher, group,
        b.leadership));
  }

  /** The extra sinks, then those configured: Kafka ({@code alerts.kafka.*}), webhook ({@code alerts.webhook.*}). */
  private static List<AlertSink> sinks(ServeConfig config, List<AlertSink> extra, PrometheusMeterRegistry registry) {
    List<AlertSink> sinks = new ArrayList<>(extra);
    String bootstrap = config.string(ServeConfig.KAFKA_BOOTSTRAP);
    if (!bootstrap.isEmpty()) {
      sinks.add(new KafkaAlertSink(bootstrap, config.string(ServeConfig.KAFKA_TOPIC), registry));
    }
    String webhook = config.string(ServeConfig.WEBHOOK_URL);
    if (!webhook.isEmpty()) {
      sinks.add(new WebhookAlertSink(new WebhookAlertSink.Settings(URI.create(webhook),
          config.intValue(ServeConfig.WEBHOOK_ATTEMPTS), Duration.ofMillis(config.longValue(ServeConfig.WEBHOOK_BACKOFF)),
          Duration.ofMillis(config.longValue(ServeConfig.WEBHOOK_MAX_BACKOFF)),
          Duration.ofMillis(config.longValue(ServeConfig.WEBHOOK_TIMEOUT)), config.intValue(ServeConfig.WEBHOOK_QUEUE)),
          registry));
    }
    return sinks;
  }

  public static Builder builder() {
    return new Builder();
  }

  /**
   * Processes the newest table of every segment now, builds the views and starts listening on
   * {@code serve.host}:{@code serve.port}, then watches for new tables.
   *
   * @throws IllegalStateException when the port cannot be bound (the cause says why)
   */
  public ServeServer start() {
    port = runtime.start();
    LOG.info("pairpulse serve listening on http://{}:{}/ (segments {}, cohort floor {})",
        config.string(ServeConfig.HOST), port, runtime.segmentNames(), floor.minBaskets());
    return this;
  }

  /**
   * Processes any new table version of every segment now: floored view, trend point, drift and
   * alerts. The watcher does this on its own; tests call it to be deterministic.
   */
  public void catchUp() {
    runtime.catchUp();
  }

  /** Waits until alert events so far were handed to every sink. */
  public void drainAlerts() throws InterruptedException {
    dispatcher.drain();
  }

  /** True while this instance raises the alerts (always outside group mode). */
  public boolean alertLeader() {
    return group.alertLeader();
  }

  /** The bound port (after {@link #start()}). */
  public int port() {
    return port;
  }

  /** http://host:port */
  public URI uri() {
    String host = config.string(ServeConfig.HOST);
    return URI.create("http://" + (host.contains(":") ? "[" + host + "]" : host) + ":" + port);
  }

  public ServeConfig config() {
    return config;
  }

  public AlertHistory alertHistory() {
    return history;
  }

  public PrometheusMeterRegistry registry() {
    return registry;
  }

  /** The routes the API serves, "METHOD path". */
  public List<String> routes() {
    return runtime.routes();
  }

  /** The segments served now: {@value #ALL} first, then by name (discovered ones appear as they are found). */
  public List<String> segmentNames() {
    return runtime.segmentNames();
  }

  /** The newest floored table of a segment (what requests answer from). */
  public FlooredTable view(String segment) {
    return runtime.view(segment).orElseThrow(() -> new IllegalArgumentException("unknown segment '" + segment + "'"));
  }

  @Override
  public void close() {
    runtime.close();
  }

  /** How the wiring assembles a server; only a source for segment {@value #ALL} is required. */
  public static final class Builder {
    private ServeConfig config = ServeConfig.defaults();
    private final Map<String, PairTableSource> sources = new LinkedHashMap<>();
    private Supplier<Map<String, ? extends PairTableSource>> discovered;
    private List<HorizonSpec> horizons = HorizonSpec.defaults();
    private PrometheusMeterRegistry registry;
    private IngestStatus ingestStatus = IngestStatus.none();
    private Supplier<SketchHealth> sketchHealth = SketchHealth::unknown;
    private EvaluationStatus evaluation = EvaluationStatus.none();
    private EventClock wallClock = EventClock.system();
    private EventClock alertClock;
    private final List<AlertSink> sinks = new ArrayList<>();
    private GroupStatus group = GroupStatus.none();
    private AlertLeadership leadership;

    private Builder() {}

    public Builder config(ServeConfig value) {
      this.config = Objects.requireNonNull(value);
      return this;
    }

    /** A segment's pair tables; segment {@value #ALL} (every basket) is required. */
    public Builder segment(String name, PairTableSource source) {
      if (name == null || !SEGMENT_NAME.matcher(name).matches()) {
        throw new IllegalArgumentException("segment names are " + SEGMENT_NAME.pattern() + ", got '" + name + "'");
      }
      if (sources.putIfAbsent(name, Objects.requireNonNull(source)) != null) {
        throw new IllegalArgumentException("segment '" + name + "' given twice");
      }
      return this;
    }

    /**
     * Segments found while running: asked by the watcher before each round, every segment it names that is not
     * served yet is added (e.g. ingest's {@code segmentTables()}). A name given by {@link #segment} wins.
     */
    public Builder discoveredSegments(Supplier<Map<String, ? extends PairTableSource>> value) {
      this.discovered = Objects.requireNonNull(value);
      return this;
    }

    /** The engine's horizons (which are windows matters to the cohort floor); default the default horizons. */
    public Builder horizons(List<HorizonSpec> value) {
      this.horizons = List.copyOf(value);
      return this;
    }

    /** The shared registry that {@code /metrics} scrapes; default a new one. */
    public Builder registry(PrometheusMeterRegistry value) {
      this.registry = value;
      return this;
    }

    public Builder ingestStatus(IngestStatus value) {
      this.ingestStatus = Objects.requireNonNull(value);
      return this;
    }

    public Builder sketchHealth(Supplier<SketchHealth> value) {
      this.sketchHealth = Objects.requireNonNull(value);
      return this;
    }

    public Builder evaluation(EvaluationStatus value) {
      this.evaluation = Objects.requireNonNull(value);
      return this;
    }

    /** The clock of table ages; default the system clock. */
    public Builder wallClock(EventClock value) {
      this.wallClock = Objects.requireNonNull(value);
      return this;
    }

    /** The clock of alert dwell and cooldown; default event time (the observed table's watermark). */
    public Builder alertClock(EventClock value) {
      this.alertClock = value;
      return this;
    }

    /** The group's coverage and alert leadership as the status, metrics and dashboard show them (group mode). */
    public Builder group(GroupStatus value) {
      this.group = Objects.requireNonNull(value);
      return this;
    }

    /**
     * Group mode: only the leader publishes alert events, with its alert state, through {@code value} (which
     * carries them to the alerts topic); the sinks get them after the publication. Null: every event goes to the
     * sinks (one instance).
     */
    public Builder alertLeadership(AlertLeadership value) {
      this.leadership = value;
      return this;
    }

    /** An extra alert sink besides those configured (alerts.kafka.*, alerts.webhook.*). */
    public Builder alertSink(AlertSink sink) {
      this.sinks.add(Objects.requireNonNull(sink));
      return this;
    }

    public ServeServer build() {
      if (!sources.containsKey(ALL)) {
        throw new IllegalStateException("segment '" + ALL + "' is required");
      }
      return new ServeServer(this);
    }
  }
}
