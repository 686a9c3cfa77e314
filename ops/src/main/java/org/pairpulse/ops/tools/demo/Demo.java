package org.pairpulse.ops.tools.demo;

import java.net.URI;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.CompletionException;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.common.config.TopicConfig;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertSink;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The whole of pairpulse on one machine, with invented data: an in-process Kafka broker, the Kestrel
 * Connect scenario played into it on an accelerated clock, ingest and the server
 * ({@link Pipeline}). What {@code pairpulse demo} runs; the end-to-end test runs it too.
 *
 * <h2>Topics</h2>
 * {@value #BASKETS_TOPIC} (input, {@link DemoSettings#partitions()} partitions), {@value #DEAD_LETTER_TOPIC},
 * {@value #STATE_TOPIC} (compacted; ingest's group-mode checkpoints, one Kafka transaction each with the
 * consumer offsets) and {@value #ALERTS_TOPIC} (alert events as CloudEvents).
 *
 * <h2>Life cycle</h2>
 * {@link #start} starts the broker and its topics while the server starts, then the scenario producer and
 * ingest;
 * {@link #awaitPlayed} waits until the scenario up to the duration was sent and counted and its last table
 * served; {@link #close} stops the producer, ingest (final checkpoint and commit), the server and the
 * broker, in that order. {@link #close} is idempotent and may run on a shutdown hook.
 */
public final class Demo implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(Demo.class);

  public static final String BASKETS_TOPIC = "pairpulse.baskets";
  public static final String DEAD_LETTER_TOPIC = "pairpulse.dead-letters";
  public static final String STATE_TOPIC = "pairpulse.state";
  public static final String ALERTS_TOPIC = "pairpulse.alerts";
  public static final String GROUP = "pairpulse-demo";

  /** A planted pair's first alert: when the demo saw it (wall clock) and how late it came (simulated). */
  public record Detection(PlantedPair planted, AlertEvent alert, long wallMillisSinceStart) {
    /** Simulated minutes from the planted change (start of an emerging pair, end of a fading one) to the alert. */
    public double delaySimMinutes() {
      return (alert.atMillis() - changeMillis(planted)) / 60_000.0;
    }
  }

  private final DemoSettings settings;
  private final long startNanos;
  private final ScenarioGenerator scenario;
  private final AcceleratedClock clock;
  private final EmbeddedKafkaBroker broker;
  private final Pipeline pipeline;
  private final ScenarioProducer producer;
  private final DetectionSink detections;
  private final CountDownLatch closedLatch = new CountDownLatch(1);
  private final long readyWallMillis;
  private final SlidingRate eventRate = new SlidingRate(5_000);
  private volatile long firstRulesWallMillis = -1;
  private volatile boolean closed;

  private Demo(DemoSettings settings, long startNanos, ScenarioGenerator scenario, AcceleratedClock clock,
      EmbeddedKafkaBroker broker, Pipeline pipeline, ScenarioProducer producer, DetectionSink detections) {
    this.settings = settings;
    this.startNanos = startNanos;
    this.scenario = scenario;
    this.clock = clock;
    this.broker = broker;
    this.pipeline = pipeline;
    this.producer = producer;
    this.detections = detections;
    this.readyWallMillis = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - startNanos);
  }

  /** Wall-clock milliseconds {@link #start} took until the scenario began to play. */
  public long readyWallMillis() {
    return readyWallMillis;
  }

  /**
   * Starts everything; returns when ingest reads. To be quick, the server starts while the broker does,
   * and the scenario starts playing as soon as its topic exists, while ingest connects (the shop is open
   * before pairpulse is): ingest then catches up on those first seconds at once.
   *
   * @throws IllegalStateException when a part cannot start (the server's port is taken, say)
   */
  public static Demo start(DemoSettings settings) {
    long startNanos = System.nanoTime();
    ScenarioGenerator scenario = new ScenarioGenerator(settings.scenario());
    EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder()
        .property("log.retention.ms", "-1") // the demo's topics live as long as the broker (deleted on close)
        .build();
    CompletableFuture<Void> brokerUp = CompletableFuture.runAsync(() -> {
      broker.start();
      broker.createTopic(BASKETS_TOPIC, settings.partitions());
      broker.createTopic(DEAD_LETTER_TOPIC, settings.partitions());
      broker.createTopic(STATE_TOPIC, settings.partitions(),
          Map.of(TopicConfig.CLEANUP_POLICY_CONFIG, TopicConfig.CLEANUP_POLICY_COMPACT));
      broker.createTopic(ALERTS_TOPIC, 1);
    }, r -> new Thread(r, "pairpulse-demo-broker-start").start());
    Pipeline pipeline = null;
    ScenarioProducer producer = null;
    try {
      DetectionSink detections = new DetectionSink(scenario.groundTruth(), startNanos);
      pipeline = Pipeline.create(pipelineSettings(settings, broker.bootstrapServers()), EventClock.system(),
          List.of(detections));
      brokerUp.join();
      AcceleratedClock clock = new AcceleratedClock(settings.clockStartMillis(), settings.speed());
      Pipeline running = pipeline;
      ScenarioProducer[] self = new ScenarioProducer[1];
      producer = new ScenarioProducer(scenario, clock, settings.simEndMillis(), broker.bootstrapServers(), BASKETS_TOPIC,
          () -> awaitCounted(running, self[0], FAST_FORWARD_WAIT));
      self[0] = producer;
      producer.start(); // starts the clock at its first basket after the fast-forward
      pipeline.startIngest();
      return new Demo(settings, startNanos, scenario, clock, broker, pipeline, producer, detections);
    } catch (RuntimeException e) {
      if (producer != null) {
        producer.close();
      }
      if (pipeline != null) {
        pipeline.close();
      }
      brokerUp.exceptionally(t -> null).join();
      broker.close();
      throw e instanceof CompletionException && e.getCause() instanceof RuntimeException r ? r : e;
    }
  }

  /** Longest wait for ingest to count the fast-forward before the clock starts anyway. */
  static final Duration FAST_FORWARD_WAIT = Duration.ofMinutes(5);

  /** Waits until ingest has counted (or dead-lettered) every basket the producer sent so far, or the timeout. */
  private static void awaitCounted(Pipeline pipeline, ScenarioProducer producer, Duration timeout) {
    long deadline = System.nanoTime() + timeout.toNanos();
    try {
      while (System.nanoTime() < deadline && pipeline.failure() == null) {
        IngestHealth ingest = pipeline.ingestHealth();
        if (ingest.basketsTotal() + ingest.deadLettersTotal() >= producer.sent() - producer.failed()) {
          return;
        }
        Thread.sleep(50); // ingest counts on its own threads
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }

  /** The pipeline settings of the demo: group-mode checkpoints, fast refresh, the demo engine. */
  static Pipeline.Settings pipelineSettings(DemoSettings settings, String bootstrapServers) {
    Map<String, Object> ingest = new HashMap<>();
    ingest.put(IngestConfig.BOOTSTRAP_SERVERS, bootstrapServers);
    ingest.put(IngestConfig.TOPICS, BASKETS_TOPIC);
    ingest.put(IngestConfig.GROUP_ID, GROUP);
    ingest.put(IngestConfig.INSTANCE_ID, "demo");
    ingest.put(IngestConfig.DEAD_LETTER_TOPIC, DEAD_LETTER_TOPIC);
    ingest.put(IngestConfig.STATE_TOPIC, STATE_TOPIC);
    ingest.put(IngestConfig.TOPICS_CREATE, "false");
    ingest.put(IngestConfig.CHECKPOINT_STORE, "kafka");
    ingest.put(IngestConfig.CHECKPOINT_INTERVAL_MS, "10000");
    ingest.put(IngestConfig.REFRESH_INTERVAL_MS, Long.toString(settings.refreshIntervalMillis()));
    ingest.put(IngestConfig.POLL_TIMEOUT_MS, "50");
    // simulated time may run ahead of the wall clock when the demo plays on (the scenario lasts up to a year)
    ingest.put(IngestConfig.MAX_FUTURE_MS, Long.toString(Duration.ofDays(400).toMillis()));
    Map<String, String> serve = new HashMap<>();
    serve.put(ServeConfig.HOST, settings.host());
    serve.put(ServeConfig.PORT, Integer.toString(settings.port()));
    // one coarse segment attribute (app, web, store): the dashboard's segment picker and the API's ?segment=
    return new Pipeline.Settings(ingest, DemoSettings.engine(), ServeConfig.from(serve), ALERTS_TOPIC, false,
        List.of(DemoSettings.SEGMENT_ATTRIBUTE),
        2_000)
        .withEvaluation(EvaluationSettings.defaults()); // the dashboard's evaluation tile: 10 % of the baskets
  }

  public DemoSettings settings() {
    return settings;
  }

  public Pipeline pipeline() {
    return pipeline;
  }

  public ServeServer server() {
    return pipeline.server();
  }

  /** The dashboard's address. */
  public URI dashboard() {
    return URI.create(pipeline.server().uri() + "/");
  }

  public String bootstrapServers() {
    return broker.bootstrapServers();
  }

  public ScenarioGroundTruth groundTruth() {
    return scenario.groundTruth();
  }

  /** Wall-clock milliseconds since {@link #start} was called. */
  public long wallMillis() {
    return TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - startNanos);
  }

  /**
   * Simulated now on the demo clock (the producer sends each basket when this reaches its event time); during
   * a fast-forward, the newest basket sent.
   */
  public long simMillis() {
    if (!clock.isStarted()) {
      long last = producer.lastEventMillis();
      return last == Long.MIN_VALUE ? settings.scenario().startMillis() : last;
    }
    return Math.min(clock.simMillis(), settings.simEndMillis());
  }

  /** True while the fast-forward (if any) is being sent. */
  public boolean fastForwarding() {
    return !clock.isStarted() && settings.fastForwardSimMillis() > 0;
  }

  /** Event time of the newest basket sent. */
  public long lastSentEventMillis() {
    return producer.lastEventMillis();
  }

  public long basketsSent() {
    return producer.sent();
  }

  /**
   * Wall-clock milliseconds from the start until the server first published a rule (a pair past the
   * cohort floor in its default horizon), or −1 before that. Checked by {@link #poll()}.
   */
  public long firstRulesWallMillis() {
    return firstRulesWallMillis;
  }

  /** The planted emerging and fading pairs' first alerts, in the order they came. */
  public List<Detection> detections() {
    return List.copyOf(detections.found);
  }

  /** The planted pairs the demo should alert on within its duration: emerging and fading ones whose change it plays. */
  public List<PlantedPair> expectedAlerts() {
    List<PlantedPair> out = new ArrayList<>();
    for (PlantedPair p : scenario.groundTruth().planted()) {
      if ((p.kind() == PlantedKind.EMERGING || p.kind() == PlantedKind.FADING)
          && changeMillis(p) < settings.simEndMillis()) {
        out.add(p);
      }
    }
    return out;
  }

  /** Published pairs of the default horizon in the newest served table. */
  public int publishedRules() {
    FlooredTable view = pipeline.server().view(ServeServer.ALL);
    String horizon = pipeline.server().config().string(ServeConfig.DEFAULT_HORIZON);
    return view.hasHorizon(horizon) ? view.pairs(horizon).size() : 0;
  }

  /** Looks at the served table (first rules); call often (the progress loop does, every 250 ms). */
  public void poll() {
    if (firstRulesWallMillis < 0 && publishedRules() > 0) {
      firstRulesWallMillis = wallMillis();
    }
  }

  /** A snapshot for the progress line. */
  public Progress progress() {
    IngestHealth ingest = pipeline.ingestHealth();
    SketchHealth sketch = pipeline.sketchHealth();
    Map<AlertKind, Integer> raised = new HashMap<>();
    for (AlertEvent e : pipeline.server().alertHistory().newest(null, Integer.MAX_VALUE)) {
      if (e.transition() == AlertTransition.RAISED) {
        raised.merge(e.kind(), 1, Integer::sum);
      }
    }
    long watermark = ingest.watermarkMillis();
    return new Progress(wallMillis(), simMillis(), settings.scenario().startMillis(), watermark,
        eventRate.perSecond(wallMillis(), (long) pipeline.ingestor().metrics().recordCount()), ingest.basketsTotal(), sketch.trackedPairs(), publishedRules(), raised,
        ingest.deadLettersTotal(), fastForwarding());
  }

  /**
   * What the progress line shows.
   *
   * @param wallMillis since the start
   * @param simMillis the demo clock
   * @param simStartMillis day 0, 00:00
   * @param watermarkMillis newest event time in the served table (Long.MIN_VALUE before one)
   * @param eventsPerSecond input records read per second
   * @param baskets baskets counted
   * @param trackedPairs pairs in the tracked table (0 until first captured)
   * @param rules published pairs of the default horizon
   * @param alertsRaised raised alerts by kind
   * @param deadLetters dead letters so far
   * @param fastForwarding whether the fast-forward is being sent
   */
  public record Progress(long wallMillis, long simMillis, long simStartMillis, long watermarkMillis,
      double eventsPerSecond, long baskets, int trackedPairs, int rules, Map<AlertKind, Integer> alertsRaised,
      long deadLetters, boolean fastForwarding) {
    public Progress {
      alertsRaised = Map.copyOf(alertsRaised);
    }

    public int alerts() {
      return alertsRaised.values().stream().mapToInt(Integer::intValue).sum();
    }
  }

  /** True once the scenario up to the duration is sent (or the producer stopped). */
  public boolean finishedSending() {
    return producer.finished();
  }

  /**
   * Waits until every basket up to the duration is sent and counted and a table covering them is served,
   * or until {@code timeout}.
   *
   * @return true when all of it happened in time
   */
  public boolean awaitPlayed(Duration timeout) throws InterruptedException {
    long deadline = System.nanoTime() + timeout.toNanos();
    while (!producer.finished()) {
      if (System.nanoTime() > deadline || closed) {
        return false;
      }
      Thread.sleep(100); // the producer paces itself on the demo clock
      poll();
    }
    long last = producer.lastEventMillis();
    while (true) {
      IngestHealth ingest = pipeline.ingestHealth();
      long counted = ingest.basketsTotal() + ingest.deadLettersTotal();
      if (counted >= producer.sent() - producer.failed() && ingest.watermarkMillis() >= last) {
        pipeline.server().catchUp();
        pipeline.server().drainAlerts();
        poll();
        return true;
      }
      if (System.nanoTime() > deadline || closed || pipeline.failure() != null) {
        return false;
      }
      Thread.sleep(100); // waiting for ingest's next refresh
    }
  }

  /** Blocks until {@link #close} has finished (a shutdown hook waits for the main thread's close with it). */
  public boolean awaitClosed(Duration timeout) throws InterruptedException {
    return closedLatch.await(timeout.toMillis(), TimeUnit.MILLISECONDS);
  }

  public boolean isClosed() {
    return closed;
  }

  /** Stops the producer, ingest (final checkpoint), the server and the broker, in that order. Idempotent. */
  @Override
  public synchronized void close() {
    if (closed) {
      return;
    }
    closed = true;
    try {
      producer.close();
      pipeline.close();
      broker.close();
    } finally {
      closedLatch.countDown();
    }
  }

  /** The moment a planted pair's alert is due from: start of an emerging pair, end of a fading one. */
  static long changeMillis(PlantedPair p) {
    return p.kind() == PlantedKind.FADING ? p.endMillis() : p.startMillis();
  }

  /** Events per second over the last few seconds (ingest's own gauge covers one second: too jumpy to read). */
  private static final class SlidingRate {
    private final long windowMillis;
    private final java.util.ArrayDeque<long[]> samples = new java.util.ArrayDeque<>();

    SlidingRate(long windowMillis) {
      this.windowMillis = windowMillis;
    }

    synchronized double perSecond(long nowMillis, long count) {
      samples.addLast(new long[] {nowMillis, count});
      while (samples.size() > 2 && samples.peekFirst()[0] < nowMillis - windowMillis) {
        samples.removeFirst();
      }
      long[] first = samples.peekFirst();
      long elapsed = nowMillis - first[0];
      return elapsed <= 0 ? 0 : (count - first[1]) * 1000.0 / elapsed;
    }
  }

  /** An alert sink that notes the first raised alert of each planted emerging or fading pair. */
  private static final class DetectionSink implements AlertSink {
    private final ScenarioGroundTruth truth;
    private final long startNanos;
    final List<Detection> found = new CopyOnWriteArrayList<>();

    DetectionSink(ScenarioGroundTruth truth, long startNanos) {
      this.truth = truth;
      this.startNanos = startNanos;
    }

    @Override
    public String name() {
      return "demo";
    }

    @Override
    public void publish(AlertEvent event, byte[] cloudEvent) {
      if (event.transition() != AlertTransition.RAISED || !ServeServer.ALL.equals(event.segment())) {
        return;
      }
      Optional<PlantedPair> planted = truth.find(event.pair().first(), event.pair().second());
      if (planted.isEmpty()) {
        return;
      }
      PlantedKind kind = planted.get().kind();
      boolean matches = kind == PlantedKind.EMERGING && event.kind() == AlertKind.EMERGING
          || kind == PlantedKind.FADING && event.kind() == AlertKind.FADING;
      if (matches && found.stream().noneMatch(x -> x.planted().equals(planted.get()))) {
        found.add(new Detection(planted.get(), event, TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - startNanos)));
        LOG.debug("planted {} detected: {}", kind, event);
      }
    }

    @Override
    public void close() {}
  }
}
