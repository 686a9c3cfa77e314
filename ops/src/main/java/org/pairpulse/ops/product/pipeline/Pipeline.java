package org.pairpulse.ops.product.pipeline;

import io.micrometer.core.instrument.binder.jvm.ClassLoaderMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmThreadMetrics;
import io.micrometer.core.instrument.binder.system.ProcessorMetrics;
import io.micrometer.core.instrument.binder.system.UptimeMetrics;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.config.TopicConfig;
import org.pairpulse.ingest.kafka.GroupCoverage;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.ingest.kafka.KafkaClientProperties;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.live.LiveEvaluation;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertSink;
import org.pairpulse.serve.alerts.KafkaAlertSink;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * ingest and serve in one process: what {@code pairpulse demo} and {@code pairpulse run} start.
 *
 * <pre>
 *  Kafka ──► Ingestor (per-partition engines, checkpoints) ──pair tables──► ServeServer (API, dashboard, /metrics)
 *               │ meters ─────────────── one Prometheus registry ─────────────────┘        │ drift alerts
 *               └ merged copy every sketchHealthMillis ──► SketchHealth                       └──► alerts topic, webhook
 * </pre>
 *
 * <h2>Use</h2>
 * <pre>{@code
 * try (Pipeline pipeline = Pipeline.start(settings)) {
 *   URI dashboard = pipeline.server().uri();
 *   ...
 * } // close(): ingest stops (final checkpoint, commit), then the server (alert sinks flushed)
 * }</pre>
 *
 * <h2>Segments and the cohort floor</h2>
 * Segment {@value ServeServer#ALL} (every basket) always exists. With {@link Settings#segmentAttributes()} (ingest's
 * {@code segments.attributes}), ingest also counts each basket in segment {@code <attribute>=<value>} for each
 * configured attribute it carries, and publishes one pair table per segment every refresh; the server serves
 * them as they are discovered ({@link Ingestor#segmentTables()} to {@link ServeServer.Builder#discoveredSegments}),
 * a segment being named only once its N passes the cohort floor. The cohort floor ({@code serve.cohort.floor})
 * applies to every statistic serve publishes, in every segment: API, dashboard and alerts all read the floored
 * view.
 *
 * <h2>Threads</h2>
 * Ingest's poll and engine threads, serve's Jetty pool, table watcher and alert dispatcher, and one
 * sketch-health thread here. The live evaluation, when it runs, is a tap on ingest's poll thread
 * ({@link LiveEvaluation}): the instance reads its basket topics with one consumer, ingest's. {@link #close()} may be called
 * from a shutdown hook.
 */
public final class Pipeline implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(Pipeline.class);

  /**
   * What to start.
   *
   * @param ingest ingest's settings ({@link IngestConfig} keys, {@code kafka.*} pass-through included)
   * @param engine the engine's memory and horizons
   * @param serve the server's settings (HTTP, floor, drift thresholds, webhook); its own topic sink
   *     ({@code alerts.kafka.bootstrap.servers}) should stay empty: {@code alertTopic} is the topic sink here
   * @param alertTopic where alert events go as CloudEvents, through the same Kafka client settings as
   *     ingest; empty: no topic
   * @param createAlertTopic create {@code alertTopic} when missing (1 partition, the cluster's default
   *     replication)
   * @param segmentAttributes basket attributes to count segments by (ingest's {@code segments.attributes}; when
   *     {@code ingest} sets that key too, both must name the same attributes); empty: segment all only
   * @param sketchHealthMillis how often the state's fill and error bounds are captured (one merged copy)
   * @param evaluation the live test-then-train evaluation ({@link LiveEvaluation}: dashboard and metrics); null
   *     or a share of 0: none
   */
  public record Settings(Map<String, Object> ingest, EngineConfig engine, ServeConfig serve, String alertTopic,
      boolean createAlertTopic, List<String> segmentAttributes, long sketchHealthMillis,
      EvaluationSettings evaluation) {
    public Settings {
      ingest = Map.copyOf(ingest);
      Objects.requireNonNull(engine, "engine");
      Objects.requireNonNull(serve, "serve");
      alertTopic = alertTopic == null ? "" : alertTopic;
      segmentAttributes = List.copyOf(segmentAttributes);
      Object inIngest = ingest.get(IngestConfig.SEGMENT_ATTRIBUTES);
      if (inIngest != null && !segmentAttributes.isEmpty() && !attributeList(inIngest).equals(segmentAttributes)) {
        throw new IllegalArgumentException("segment attributes " + segmentAttributes + " differ from ingest's "
            + IngestConfig.SEGMENT_ATTRIBUTES + "=" + inIngest);
      }
      if (sketchHealthMillis < 100) {
        throw new IllegalArgumentException("sketchHealthMillis must be >= 100, got " + sketchHealthMillis);
      }
    }

    /** Settings without a live evaluation. */
    public Settings(Map<String, Object> ingest, EngineConfig engine, ServeConfig serve, String alertTopic,
        boolean createAlertTopic, List<String> segmentAttributes, long sketchHealthMillis) {
      this(ingest, engine, serve, alertTopic, createAlertTopic, segmentAttributes, sketchHealthMillis, null);
    }

    /** These settings with the live evaluation {@code value} (null: none). */
    public Settings withEvaluation(EvaluationSettings value) {
      return new Settings(ingest, engine, serve, alertTopic, createAlertTopic, segmentAttributes, sketchHealthMillis,
          value);
    }

    boolean evaluates() {
      return evaluation != null && evaluation.share() > 0;
    }
  }

  private static List<String> attributeList(Object value) {
    if (value instanceof List<?> list) {
      return list.stream().map(Object::toString).map(String::trim).toList();
    }
    return java.util.Arrays.stream(value.toString().split(",")).map(String::trim).filter(v -> !v.isEmpty()).toList();
  }

  private final Settings settings;
  private final Ingestor ingestor;
  private final IngestHealthReporter health;
  private final SketchHealthPoller sketch;
  private final ServeServer server;
  private final PrometheusMeterRegistry registry;
  private final JvmGcMetrics gcMetrics;
  private final LiveEvaluation evaluation; // null when none
  private volatile boolean closed;

  private Pipeline(Settings settings, Ingestor ingestor, IngestHealthReporter health, SketchHealthPoller sketch,
      ServeServer server, PrometheusMeterRegistry registry, JvmGcMetrics gcMetrics, LiveEvaluation evaluation) {
    this.settings = settings;
    this.ingestor = ingestor;
    this.health = health;
    this.sketch = sketch;
    this.server = server;
    this.registry = registry;
    this.gcMetrics = gcMetrics;
    this.evaluation = evaluation;
  }

  /**
   * Starts the server, then ingest (it connects, creates its topics if asked, restores checkpoints).
   *
   * @throws org.apache.kafka.common.config.ConfigException when an ingest setting (segment attributes included)
   *     is invalid
   * @throws IllegalStateException when ingest or the server cannot start (the cause says why)
   */
  public static Pipeline start(Settings settings) {
    return start(settings, EventClock.system(), List.of());
  }

  /**
   * {@link #start(Settings)} with a wall clock for ingest's intervals and serve's table ages, and alert sinks
   * besides the configured ones.
   */
  public static Pipeline start(Settings settings, EventClock wallClock, List<AlertSink> extraSinks) {
    Pipeline pipeline = create(settings, wallClock, extraSinks);
    try {
      return pipeline.startIngest();
    } catch (RuntimeException e) {
      pipeline.close();
      throw e;
    }
  }

  /**
   * Builds everything and starts the server, but not ingest: health answers at once, readiness
   * ({@code /api/v1/health/ready}) waits for the first pair table, the status shows ingest as starting.
   * Then call {@link #startIngest()} (the demo starts its broker meanwhile).
   *
   * @throws org.apache.kafka.common.config.ConfigException when an ingest setting is invalid
   * @throws IllegalStateException when the server cannot start (the cause says why)
   */
  public static Pipeline create(Settings settings, EventClock wallClock, List<AlertSink> extraSinks) {
    IngestConfig ingestConfig = ingestConfig(settings);
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    new JvmMemoryMetrics().bindTo(registry);
    JvmGcMetrics gc = new JvmGcMetrics();
    gc.bindTo(registry);
    new JvmThreadMetrics().bindTo(registry);
    new ClassLoaderMetrics().bindTo(registry);
    new ProcessorMetrics().bindTo(registry);
    new UptimeMetrics().bindTo(registry);
    Ingestor ingestor = new Ingestor(ingestConfig, settings.engine(), registry, wallClock);
    IngestHealthReporter health = new IngestHealthReporter(ingestor, registry);
    SketchHealthPoller sketch = new SketchHealthPoller(ingestor, settings.sketchHealthMillis());
    ServeServer.Builder builder = ServeServer.builder()
        .config(settings.serve())
        .segment(ServeServer.ALL, ingestor.pairTables())
        .discoveredSegments(ingestor::segmentTables)
        .horizons(settings.engine().horizons())
        .registry(registry)
        .ingestStatus(health)
        .sketchHealth(sketch::latest)
        .wallClock(wallClock);
    extraSinks.forEach(builder::alertSink);
    java.util.concurrent.atomic.AtomicReference<ServeServer> served = new java.util.concurrent.atomic.AtomicReference<>();
    LiveEvaluation evaluation = null;
    GroupAlerts groupAlerts = null;
    if (ingestor.groupViewEnabled()) {
      groupAlerts = new GroupAlerts(ingestConfig, ingestConfig.groupId(), ingestor::assignment,
          GroupAlerts.designated(ingestConfig.topics()), settings.alertTopic(), alertStateTopic(ingestConfig),
          ingestor.followKey(alertStateTopic(ingestConfig), ingestConfig.groupId().getBytes(StandardCharsets.UTF_8)),
          registry);
      GroupAlerts leader = groupAlerts;
      builder.alertLeadership(groupAlerts).group(new GroupStatus() {
        @Override
        public Optional<GroupStatus.Coverage> coverage() {
          return ingestor.coverage().map(Pipeline::served);
        }

        @Override
        public boolean alertLeader() {
          return leader.leading();
        }
      });
    }
    if (settings.evaluates()) {
      // a tap on ingest's path, not a consumer of its own: one consumer per instance
      GroupAlerts leader = groupAlerts;
      evaluation = LiveEvaluation.onIngestPath(settings.evaluation(), () -> served.get().view(ServeServer.ALL),
          registry, leader == null ? () -> true : leader::leading);
      ingestor.basketTap(evaluation.tap());
      builder.evaluation(evaluation);
    }
    ServeServer server = null;
    try {
      if (!settings.alertTopic().isEmpty() && groupAlerts == null) {
        builder.alertSink(new KafkaAlertSink(KafkaClientProperties.forClient(ingestConfig, KafkaClientProperties.Kind.PRODUCER),
            settings.alertTopic(), registry));
      }
      server = builder.build().start();
      served.set(server);
    } catch (RuntimeException e) {
      sketch.close();
      gc.close();
      throw e;
    }
    return new Pipeline(settings, ingestor, health, sketch, server, registry, gc, evaluation);
  }

  /**
   * Starts ingest: creates the alerts topic if asked, then the ingestor connects, creates its topics if
   * asked, restores its partitions' checkpoints and reads. Returns when its clients are set up.
   *
   * @throws IllegalStateException when ingest cannot start (the cause says why); close the pipeline then
   */
  public Pipeline startIngest() {
    IngestConfig ingestConfig = ingestConfig(settings);
    if (!settings.alertTopic().isEmpty() && settings.createAlertTopic()) {
      createTopic(ingestConfig, settings.alertTopic(), Map.of());
    }
    if (ingestor.groupViewEnabled() && ingestConfig.getBoolean(IngestConfig.TOPICS_CREATE)) {
      createTopic(ingestConfig, alertStateTopic(ingestConfig),
          Map.of(TopicConfig.CLEANUP_POLICY_CONFIG, TopicConfig.CLEANUP_POLICY_COMPACT));
    }
    ingestor.start();
    health.started();
    return this;
  }

  /** The compacted topic of the group's alert state: the state topic's name with {@code .alerts}. */
  static String alertStateTopic(IngestConfig ingest) {
    return ingest.getString(IngestConfig.STATE_TOPIC) + ".alerts";
  }

  private static IngestConfig ingestConfig(Settings settings) {
    Map<String, Object> props = new java.util.HashMap<>(settings.ingest());
    if (!settings.segmentAttributes().isEmpty()) {
      props.put(IngestConfig.SEGMENT_ATTRIBUTES, String.join(",", settings.segmentAttributes()));
    }
    return new IngestConfig(props);
  }

  /** Ingest's coverage as serve shows it. */
  private static GroupStatus.Coverage served(GroupCoverage c) {
    return new GroupStatus.Coverage(c.partitions(), c.live(), c.remote(), c.empty(),
        c.missing().stream().map(Object::toString).toList(), c.stale().stream().map(Object::toString).toList(),
        c.oldestContributionAgeMillis());
  }

  private static void createTopic(IngestConfig ingest, String topic, Map<String, String> configs) {
    try (Admin admin = Admin.create(KafkaClientProperties.forClient(ingest, KafkaClientProperties.Kind.ADMIN))) {
      if (admin.listTopics().names().get(60, TimeUnit.SECONDS).contains(topic)) {
        return;
      }
      admin.createTopics(List.of(new NewTopic(topic, Optional.of(1), Optional.empty()).configs(configs)))
          .all().get(60, TimeUnit.SECONDS);
      LOG.info("created topic {}", topic);
    } catch (ExecutionException e) {
      if (!(e.getCause() instanceof TopicExistsException)) {
        LOG.warn("cannot create topic {} ({}); alerts are sent to it anyway", topic, e.getCause().toString());
      }
    } catch (TimeoutException e) {
      LOG.warn("cannot create topic {} (timed out); alerts are sent to it anyway", topic);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }

  public Ingestor ingestor() {
    return ingestor;
  }

  /** The live evaluation, when the settings run one. */
  public Optional<LiveEvaluation> evaluation() {
    return Optional.ofNullable(evaluation);
  }

  public ServeServer server() {
    return server;
  }

  /** The registry {@code /metrics} scrapes: ingest, serve, alert delivery and JVM meters. */
  public PrometheusMeterRegistry registry() {
    return registry;
  }

  /** Ingest as serve sees it. */
  public IngestHealth ingestHealth() {
    return health.health();
  }

  /** The newest captured fill and error bounds of the state ({@link SketchHealth#unknown()} before one). */
  public SketchHealth sketchHealth() {
    return sketch.latest();
  }

  /** The exception that stopped ingest, or null while it runs (or after a clean stop). */
  public Throwable failure() {
    return ingestor.failure();
  }

  /**
   * Stops in order: ingest (stop polling, count what was read, final checkpoint and commit, close the
   * clients), the sketch-health thread, then the server (stop listening, hand pending alerts to the
   * sinks and close them). Idempotent.
   */
  @Override
  public synchronized void close() {
    if (closed) {
      return;
    }
    closed = true;
    ingestor.close();
    health.stopped();
    sketch.close();
    try {
      server.catchUp(); // the last table: its alerts are dispatched before the sinks close
      server.drainAlerts();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    } catch (RuntimeException e) {
      LOG.warn("last table not processed on shutdown: {}", e.toString());
    }
    server.close();
    gcMetrics.close();
  }
}
