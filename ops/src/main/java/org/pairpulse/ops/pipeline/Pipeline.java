package org.pairpulse.ops.pipeline;

import io.micrometer.core.instrument.binder.jvm.ClassLoaderMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmThreadMetrics;
import io.micrometer.core.instrument.binder.system.ProcessorMetrics;
import io.micrometer.core.instrument.binder.system.UptimeMetrics;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
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
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertSink;
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
 * Only segment {@value ServeServer#ALL} (every basket) exists: ingest counts every basket in one engine per
 * partition and carries basket attributes without counting them, so {@link Settings#segmentAttributes()}
 * must be empty. The cohort floor ({@code serve.cohortFloor}) applies to every statistic serve publishes:
 * API, dashboard and alerts all read the floored view.
 *
 * <h2>Threads</h2>
 * Ingest's poll and engine threads, serve's Jetty pool, table watcher and alert dispatcher, and one
 * sketch-health thread here. {@link #close()} may be called from a shutdown hook.
 */
public final class Pipeline implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(Pipeline.class);

  /**
   * What to start.
   *
   * @param ingest ingest's settings ({@link IngestConfig} keys, {@code kafka.*} pass-through included)
   * @param engine the engine's memory and horizons
   * @param serve the server's settings (HTTP, floor, drift thresholds, webhook); its own topic sink
   *     ({@code alerts.kafka.bootstrapServers}) should stay empty: {@code alertTopic} is the topic sink here
   * @param alertTopic where alert events go as CloudEvents, through the same Kafka client settings as
   *     ingest; empty: no topic
   * @param createAlertTopic create {@code alertTopic} when missing (1 partition, the cluster's default
   *     replication)
   * @param segmentAttributes basket attributes to count segments by; must be empty (see the class comment)
   * @param sketchHealthMillis how often the state's fill and error bounds are captured (one merged copy)
   */
  public record Settings(Map<String, Object> ingest, EngineConfig engine, ServeConfig serve, String alertTopic,
      boolean createAlertTopic, List<String> segmentAttributes, long sketchHealthMillis) {
    public Settings {
      ingest = Map.copyOf(ingest);
      Objects.requireNonNull(engine, "engine");
      Objects.requireNonNull(serve, "serve");
      alertTopic = alertTopic == null ? "" : alertTopic;
      segmentAttributes = List.copyOf(segmentAttributes);
      if (sketchHealthMillis < 100) {
        throw new IllegalArgumentException("sketchHealthMillis must be >= 100, got " + sketchHealthMillis);
      }
    }
  }

  private final Settings settings;
  private final Ingestor ingestor;
  private final IngestHealthReporter health;
  private final SketchHealthPoller sketch;
  private final ServeServer server;
  private final PrometheusMeterRegistry registry;
  private final JvmGcMetrics gcMetrics;
  private volatile boolean closed;

  private Pipeline(Settings settings, Ingestor ingestor, IngestHealthReporter health, SketchHealthPoller sketch,
      ServeServer server, PrometheusMeterRegistry registry, JvmGcMetrics gcMetrics) {
    this.settings = settings;
    this.ingestor = ingestor;
    this.health = health;
    this.sketch = sketch;
    this.server = server;
    this.registry = registry;
    this.gcMetrics = gcMetrics;
  }

  /**
   * Starts the server, then ingest (it connects, creates its topics if asked, restores checkpoints).
   *
   * @throws UnsupportedOperationException when segment attributes are configured
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
   * @throws UnsupportedOperationException when segment attributes are configured
   * @throws IllegalStateException when the server cannot start (the cause says why)
   */
  public static Pipeline create(Settings settings, EventClock wallClock, List<AlertSink> extraSinks) {
    if (!settings.segmentAttributes().isEmpty()) {
      throw new UnsupportedOperationException("segment attributes " + settings.segmentAttributes()
          + " are configured, but per-segment counting is not available yet: ingest counts every basket in one"
          + " segment ('all') and carries attributes without counting them; leave the segment attributes empty");
    }
    IngestConfig ingestConfig = new IngestConfig(settings.ingest());
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
        .horizons(settings.engine().horizons())
        .registry(registry)
        .ingestStatus(health)
        .sketchHealth(sketch::latest)
        .wallClock(wallClock);
    extraSinks.forEach(builder::alertSink);
    ServeServer server = null;
    try {
      if (!settings.alertTopic().isEmpty()) {
        builder.alertSink(new KafkaTopicAlertSink(KafkaClientProperties.forClient(settings.ingest(), "producer"),
            settings.alertTopic(), registry));
      }
      server = builder.build().start();
    } catch (RuntimeException e) {
      sketch.close();
      gc.close();
      throw e;
    }
    return new Pipeline(settings, ingestor, health, sketch, server, registry, gc);
  }

  /**
   * Starts ingest: creates the alerts topic if asked, then the ingestor connects, creates its topics if
   * asked, restores its partitions' checkpoints and reads. Returns when its clients are set up.
   *
   * @throws IllegalStateException when ingest cannot start (the cause says why); close the pipeline then
   */
  public Pipeline startIngest() {
    if (!settings.alertTopic().isEmpty() && settings.createAlertTopic()) {
      createTopic(settings.ingest(), settings.alertTopic());
    }
    ingestor.start();
    health.started();
    return this;
  }

  private static void createTopic(Map<String, Object> ingest, String topic) {
    try (Admin admin = Admin.create(KafkaClientProperties.forClient(ingest, "admin"))) {
      if (admin.listTopics().names().get(60, TimeUnit.SECONDS).contains(topic)) {
        return;
      }
      admin.createTopics(List.of(new NewTopic(topic, Optional.of(1), Optional.empty()))).all().get(60, TimeUnit.SECONDS);
      LOG.info("created alerts topic {}", topic);
    } catch (ExecutionException e) {
      if (!(e.getCause() instanceof TopicExistsException)) {
        LOG.warn("cannot create the alerts topic {} ({}); alerts are sent to it anyway", topic, e.getCause().toString());
      }
    } catch (TimeoutException e) {
      LOG.warn("cannot create the alerts topic {} (timed out); alerts are sent to it anyway", topic);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }

  public Ingestor ingestor() {
    return ingestor;
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
