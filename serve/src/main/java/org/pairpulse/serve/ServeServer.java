package org.pairpulse.serve;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.URI;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentSkipListMap;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.function.Supplier;
import java.util.regex.Pattern;
import org.pairpulse.serve.alerts.AlertDispatcher;
import org.pairpulse.serve.alerts.AlertLeadership;
import org.pairpulse.serve.alerts.AlertStates;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.alerts.AlertSink;
import org.pairpulse.serve.alerts.KafkaAlertSink;
import org.pairpulse.serve.alerts.WebhookAlertSink;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.DriftEntry;
import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.drift.DriftReport;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.internal.ApiServer;
import org.pairpulse.serve.internal.SegmentState;
import org.pairpulse.serve.internal.Segments;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.table.PairTable;
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
 * thread looks for new table versions every {@code serve.watchMillis}: per new version it builds the
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
  /** {@value #ALL} first, then by name; read by request threads, added to by the watcher. */
  private final Map<String, SegmentState> segments = new ConcurrentSkipListMap<>(ServeServer::segmentOrder);
  private final Supplier<Map<String, ? extends PairTableSource>> discovered;
  private final java.util.Set<String> refusedNames = new java.util.HashSet<>();
  /** Discovered segments not served yet: the table version last found under the floor (watcher only). */
  private final Map<String, Long> hiddenVersions = new java.util.HashMap<>();
  private final EventClock wallClock;
  private final CohortFloor floor;
  private final DriftSettings driftSettings;
  private final EventClock alertClock;
  private final AlertHistory history;
  private final AlertDispatcher dispatcher;
  private final ServeMeters meters;
  private final PrometheusMeterRegistry registry;
  private final ApiServer api;
  private final ScheduledExecutorService watcher;
  private final Suggester suggester;
  private final GroupStatus group;
  /** Group mode: who publishes the group's alerts (null: this instance publishes its own). */
  private final AlertLeadership leadership;
  /** Watcher only: whether this instance led at the last table (its machines hold the group's alert state). */
  private boolean leadingNow;
  /** Watcher only: alert states taken over for segments not served yet. */
  private final Map<String, DriftMonitor.AlertState> pendingAlertStates = new java.util.HashMap<>();
  private int port = -1;

  private ServeServer(Builder b) {
    this.config = b.config;
    this.floor = new CohortFloor(config.doubleValue(ServeConfig.COHORT_FLOOR), b.horizons);
    this.driftSettings = config.driftSettings();
    this.alertClock = b.alertClock;
    this.registry = b.registry != null ? b.registry : new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    Supplier<SketchHealth> sketch = b.sketchHealth;
    IngestStatus ingest = b.ingestStatus;
    this.meters = new ServeMeters(registry, sketch);
    this.wallClock = b.wallClock;
    this.discovered = b.discovered;
    for (Map.Entry<String, PairTableSource> e : b.sources.entrySet()) {
      addSegment(e.getKey(), e.getValue());
    }
    this.history = new AlertHistory(config.intValue(ServeConfig.ALERT_HISTORY));
    List<AlertSink> sinks = new ArrayList<>(b.sinks);
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
    this.dispatcher = new AlertDispatcher(history, sinks, registry);
    this.group = b.group;
    this.leadership = b.leadership;
    registerGroupMeters();
    this.suggester = new Suggester(config.intValue(ServeConfig.MAX_NEIGHBOURS));
    this.api = new ApiServer(new ApiServer.Deps(config, segments, floor, driftSettings, suggester, meters, registry,
        ingest, sketch, b.evaluation, history, b.wallClock, b.group));
    this.watcher = Executors.newSingleThreadScheduledExecutor(r -> {
      Thread t = new Thread(r, "pairpulse-serve-watch");
      t.setDaemon(true);
      return t;
    });
  }

  /** {@value #ALL} first, then by name. */
  private static int segmentOrder(String a, String b) {
    if (a.equals(b)) {
      return 0;
    }
    return a.equals(ALL) ? -1 : b.equals(ALL) ? 1 : a.compareTo(b);
  }

  private void addSegment(String name, PairTableSource source) {
    TrendHistory trend = new TrendHistory(config.intValue(ServeConfig.TREND_POINTS),
        config.intValue(ServeConfig.TREND_PAIRS), config.intValue(ServeConfig.TREND_ITEMS),
        config.intValue(ServeConfig.TREND_PINNED));
    DriftMonitor drift = new DriftMonitor(driftSettings, name);
    DriftMonitor.AlertState taken = pendingAlertStates.remove(name);
    if (taken != null) {
      drift.restore(taken);
    }
    SegmentState state = Segments.create(name, source, drift, trend, FlooredTable.of(PairTable.empty(), floor));
    Gauge.builder("pairpulse.pair.table.age", state, s -> ageSeconds(s, wallClock)).baseUnit("seconds")
        .tag("segment", name).description("Time since the served pair table was published").register(registry);
    Gauge.builder("pairpulse.pair.table.version", state, s -> s.view().version()).tag("segment", name)
        .description("Version of the served pair table").register(registry);
    Gauge.builder("pairpulse.pair.table.pairs", state, s -> s.view().publishedPairs()).tag("segment", name)
        .tag("state", "published").description("Pair statistics over all horizons, by cohort-floor outcome")
        .register(registry);
    Gauge.builder("pairpulse.pair.table.pairs", state, s -> s.view().suppressedPairs()).tag("segment", name)
        .tag("state", "suppressed").register(registry);
    segments.put(name, state);
  }

  /** Adds the discovered segments not served yet (watcher; names that break {@link #SEGMENT_NAME} are logged once). */
  private void discover() {
    if (discovered == null) {
      return;
    }
    Map<String, ? extends PairTableSource> found = discovered.get();
    for (Map.Entry<String, ? extends PairTableSource> e : found.entrySet()) {
      String name = e.getKey();
      if (segments.containsKey(name)) {
        continue;
      }
      if (!SEGMENT_NAME.matcher(name).matches()) {
        if (refusedNames.add(name)) {
          LOG.warn("segment name '{}' is not served: names are {}", name.length() > 100 ? name.substring(0, 100) : name,
              SEGMENT_NAME.pattern());
        }
        continue;
      }
      PairTable table = e.getValue().current();
      if (hiddenVersions.getOrDefault(name, -1L) == table.version()) {
        continue;
      }
      FlooredTable view = FlooredTable.of(table, floor);
      if (view.horizonNames().stream().noneMatch(h -> !Double.isNaN(view.baskets(h)))) {
        hiddenVersions.put(name, table.version()); // N under the floor everywhere: not named yet
        continue;
      }
      hiddenVersions.remove(name);
      addSegment(name, e.getValue());
      LOG.info("serving segment '{}'", name);
    }
  }

  private static double ageSeconds(SegmentState s, EventClock clock) {
    FlooredTable view = s.view();
    return view.version() == 0 ? Double.NaN : (clock.millis() - view.table().publishedAtMillis()) / 1000.0;
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
    catchUp();
    port = api.start(config.string(ServeConfig.HOST), config.intValue(ServeConfig.PORT));
    long every = config.longValue(ServeConfig.WATCH_MILLIS);
    watcher.scheduleWithFixedDelay(this::watchOnce, every, every, TimeUnit.MILLISECONDS);
    LOG.info("pairpulse serve listening on http://{}:{}/ (segments {}, cohort floor {})",
        config.string(ServeConfig.HOST), port, segments.keySet(), floor.minBaskets());
    return this;
  }

  private void watchOnce() {
    try {
      catchUp();
    } catch (RuntimeException e) {
      LOG.error("processing a new pair table failed; serving the previous one", e);
    }
  }

  /**
   * Processes any new table version of every segment now: floored view, trend point, drift and
   * alerts. The watcher does this on its own; tests call it to be deterministic.
   */
  public synchronized void catchUp() {
    discover();
    boolean leading = leadership == null || leadOrFollow();
    // a partial group view is not the group's table: drift and alerts wait for a whole one (the view is served)
    boolean whole = group.coverage().map(c -> !c.partial()).orElse(true);
    List<AlertEvent> round = new ArrayList<>();
    for (SegmentState segment : segments.values()) {
      PairTable table = segment.source().current();
      if (table.version() == Segments.processedVersion(segment)) {
        continue;
      }
      FlooredTable view = FlooredTable.of(table, floor);
      suggester.prepare(view); // the index is built here, not by the first request of the version
      Segments.view(segment, view);
      if (table.version() > 0 && whole) {
        long now = alertClock != null ? alertClock.millis() : table.watermarkMillis();
        List<AlertEvent> events = segment.drift().observe(view, now);
        segment.trend().record(view, drifting(segment.drift().report()));
        round.addAll(events);
      }
      Segments.processed(segment, table.version());
    }
    if (leadership == null) {
      dispatcher.dispatch(round);
    } else if (leading && !round.isEmpty()) {
      if (leadership.publish(round, AlertStates.encode(alertStates()))) {
        dispatcher.dispatch(round); // history, webhook and extra sinks; the alerts topic had them in the publication
      } else {
        LOG.warn("{} alert events not published: another instance leads the group's alerts now", round.size());
        leadingNow = false;
      }
    }
    meters.discover();
  }

  /**
   * Group mode: whether this instance publishes this round's alerts. On becoming the leader its alert machines take
   * the state the previous leader published last (so that no alert repeats or goes missing); a follower's machines
   * run on its own tables (the dashboard's shifting pairs), their events unpublished.
   */
  private boolean leadOrFollow() {
    if (!leadership.leading()) {
      leadingNow = false;
      return false;
    }
    if (leadingNow) {
      return true;
    }
    Optional<byte[]> state;
    try {
      state = leadership.takeOver();
    } catch (RuntimeException e) {
      LOG.warn("cannot take over the group's alerts now ({}); trying again at the next table", e.toString());
      return false;
    }
    Map<String, DriftMonitor.AlertState> states = state.map(AlertStates::decode).orElse(Map.of());
    pendingAlertStates.clear();
    for (SegmentState segment : segments.values()) {
      // a segment without published state: no alert of it was ever published, so no track carries over, but the
      // stream's start as this instance saw it stays (the decays' ages)
      segment.drift().restore(states.getOrDefault(segment.name(),
          new DriftMonitor.AlertState(segment.drift().alertState().firstWatermarkMillis(), List.of())));
    }
    states.forEach((name, s) -> {
      if (!segments.containsKey(name)) {
        pendingAlertStates.put(name, s);
      }
    });
    LOG.info("leading the group's alerts from now on ({} segments' alert state taken over)", states.size());
    leadingNow = true;
    return true;
  }

  /** Every served segment's alert state, by name. */
  private Map<String, DriftMonitor.AlertState> alertStates() {
    Map<String, DriftMonitor.AlertState> out = new java.util.TreeMap<>(pendingAlertStates);
    segments.forEach((name, segment) -> out.put(name, segment.drift().alertState()));
    return out;
  }

  /** The group's coverage meters (group mode only). */
  private void registerGroupMeters() {
    if (group.coverage().isEmpty() && leadership == null) {
      return;
    }
    for (String state : List.of("live", "remote", "empty", "missing", "stale")) {
      Gauge.builder("pairpulse.group.partitions", group, g -> g.coverage().map(c -> switch (state) {
        case "live" -> c.live();
        case "remote" -> c.remote();
        case "empty" -> c.empty();
        case "missing" -> c.missing().size();
        default -> c.stale().size();
      }).orElse(0).doubleValue()).tag("state", state)
          .description("Input partitions of the group by how the served table holds them").register(registry);
    }
    Gauge.builder("pairpulse.group.contribution.age", group,
        g -> g.coverage().map(c -> c.oldestContributionAgeMillis() / 1000.0).orElse(0.0)).baseUnit("seconds")
        .description("Age of the oldest merged partition state that lags its records").register(registry);
    Gauge.builder("pairpulse.group.partial", group, g -> g.coverage().map(c -> c.partial() ? 1.0 : 0.0).orElse(0.0))
        .description("1 when a partition's state is missing from the served table or stale").register(registry);
    Gauge.builder("pairpulse.group.alert.leader", group, g -> g.alertLeader() ? 1.0 : 0.0)
        .description("1 on the instance that raises the group's alerts").register(registry);
  }

  /** Pairs the trend records because they drift: the 20 strongest of each kind. */
  private static Set<PairKey> drifting(DriftReport report) {
    Set<PairKey> pairs = new LinkedHashSet<>();
    for (AlertKind kind : AlertKind.values()) {
      report.of(kind).stream().limit(20).map(DriftEntry::finding).forEach(f -> pairs.add(f.pair()));
    }
    return pairs;
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
    return api.routes();
  }

  /** The segments served now: {@value #ALL} first, then by name (discovered ones appear as they are found). */
  public List<String> segmentNames() {
    return List.copyOf(segments.keySet());
  }

  /** The newest floored table of a segment (what requests answer from). */
  public FlooredTable view(String segment) {
    SegmentState state = segments.get(segment);
    if (state == null) {
      throw new IllegalArgumentException("unknown segment '" + segment + "'");
    }
    return state.view();
  }

  @Override
  public void close() {
    watcher.shutdownNow();
    if (leadership != null) {
      leadership.close();
    }
    api.close();
    dispatcher.close();
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
