package org.pairpulse.ops.live;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.function.Supplier;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.PartitionInfo;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.InterruptException;
import org.apache.kafka.common.errors.WakeupException;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ops.evaluation.EvaluationSettings;
import org.pairpulse.ops.evaluation.Evaluator;
import org.pairpulse.ops.evaluation.NightlyRebuild;
import org.pairpulse.ops.evaluation.Trial;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The test-then-train evaluation on a live stream: the {@link Evaluator} of backtests, fed from the basket
 * topic while ingest counts it, so that the dashboard and {@code /metrics} show how well the served table
 * predicts baskets it has not counted yet.
 *
 * <h2>How a basket is tested before it trains</h2>
 * A consumer of its own (no group, no commits: it reads every partition of the basket topics from their end
 * at start, so only live traffic is evaluated) samples records by key (the contract's basket id) with the
 * evaluator's own rule, decodes only the sampled ones, assembles line items with a {@link PartitionFront} per
 * partition, and tests each basket against the table the server publishes at that moment. The table holds a
 * basket only after ingest counted it and a refresh followed; so a basket whose event time is later than the
 * table's watermark cannot be in it yet, and is tested. One at or before the watermark may already be counted
 * (this consumer fell behind, or the event is late): it is skipped and counted as such
 * ({@code pairpulse.evaluation.skipped{reason="counted"}}), never tested on data that holds it.
 *
 * <p>The nightly baseline freezes the first table offered in each UTC day of event time; the popular baseline
 * comes from the same table. Records that do not decode are skipped here (ingest sends them to the
 * dead-letter topic with their reason).
 *
 * <h2>Scale-out</h2>
 * In group mode ({@link #onIngestPath}) there is no consumer of its own: ingest hands it the baskets of the
 * instance's partitions as its fronts let them through, before the engine counts them, and it tests them only while
 * the instance leads the group's alerts, against the group view it serves. One evaluator per group, then, on a
 * sample of the group's traffic (the leader's partitions; records are spread over partitions by basket id).
 *
 * <p>The {@linkplain #summary() summary} the dashboard shows adds every method's scores and their hourly course
 * (event time, the newest {@value #KEEP_PERIODS} hours), kept in fixed memory.
 *
 * <p>Metrics: those of {@link Evaluator#bindTo} plus {@code pairpulse.evaluation.skipped{reason}} with reasons
 * {@code counted}, {@code no_table} and {@code undecodable}.
 */
public final class LiveEvaluation implements EvaluationStatus, AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(LiveEvaluation.class);
  private static final Duration POLL = Duration.ofMillis(200);
  /** The dashboard's series: hourly periods of event time, the newest two days of them. */
  static final Duration PERIOD = Duration.ofHours(1);
  static final int KEEP_PERIODS = 48;

  private final Map<String, Object> consumerProperties;
  private final List<String> topics;
  private final EventDecoder decoder;
  private final FrontSettings frontSettings;
  private final Supplier<FlooredTable> served;
  private final Evaluator evaluator;
  private NightlyRebuild nightly; // made with the first table: the server may not exist when this is built
  private final PeriodScores scores;
  private final Counter skippedCounted;
  private final Counter skippedNoTable;
  private final Counter skippedUndecodable;
  private final Map<TopicPartition, PartitionFront> fronts = new HashMap<>();
  private final Thread thread; // null on the ingest path
  /** On the ingest path: whether to test now (the instance leads); always true with a consumer of its own. */
  private final java.util.function.BooleanSupplier active;
  private volatile boolean stopping;
  private volatile Consumer<byte[], byte[]> consumer;
  private volatile Throwable failure;
  private volatile boolean positioned;

  /**
   * @param clientProperties Kafka client settings of a consumer (bootstrap servers, SASL/TLS pass-through);
   *     deserializers, group and commit settings are set here
   * @param topics the basket topics ingest reads
   * @param decoder ingest's decoder (same limits)
   * @param frontSettings ingest's front settings (line-item assembly, dedupe)
   * @param settings what to evaluate (share, k, horizon, ...)
   * @param served the table the server publishes now (segment {@code all}, floored as served); first asked on
   *     the evaluation's thread, after {@link #start()}
   * @param registry where the evaluation's meters go
   * @param listener told of every trial, on the evaluation's thread
   */
  public LiveEvaluation(Map<String, Object> clientProperties, List<String> topics, EventDecoder decoder,
      FrontSettings frontSettings, EvaluationSettings settings, Supplier<FlooredTable> served, MeterRegistry registry,
      java.util.function.Consumer<Trial> listener) {
    Map<String, Object> props = new HashMap<>(clientProperties);
    props.remove(ConsumerConfig.GROUP_ID_CONFIG);
    props.remove(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG);
    props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    props.put(ConsumerConfig.CLIENT_ID_CONFIG, "pairpulse-evaluation");
    props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    this.consumerProperties = props;
    this.topics = List.copyOf(topics);
    this.decoder = Objects.requireNonNull(decoder, "decoder");
    this.frontSettings = Objects.requireNonNull(frontSettings, "frontSettings");
    this.served = Objects.requireNonNull(served, "served");
    Objects.requireNonNull(listener, "listener");
    this.scores = new PeriodScores(settings.k(), PERIOD.toMillis(), KEEP_PERIODS);
    this.evaluator = Evaluator.withoutLog(settings, Suggester.defaults(), trial -> { // fixed memory
      scores.add(trial);
      listener.accept(trial);
    });
    evaluator.bindTo(registry);
    this.skippedCounted = skipped(registry, "counted");
    this.skippedNoTable = skipped(registry, "no_table");
    this.skippedUndecodable = skipped(registry, "undecodable");
    this.thread = new Thread(this::run, "pairpulse-evaluation");
    this.thread.setDaemon(true);
    this.active = () -> true;
  }

  /** On the ingest path: no consumer, baskets come through {@link #tap()}. */
  private LiveEvaluation(EvaluationSettings settings, Supplier<FlooredTable> served, MeterRegistry registry,
      java.util.function.BooleanSupplier active) {
    this.consumerProperties = Map.of();
    this.topics = List.of();
    this.decoder = null;
    this.frontSettings = null;
    this.served = Objects.requireNonNull(served, "served");
    this.active = Objects.requireNonNull(active, "active");
    this.scores = new PeriodScores(settings.k(), PERIOD.toMillis(), KEEP_PERIODS);
    this.evaluator = Evaluator.withoutLog(settings, Suggester.defaults(), scores::add);
    evaluator.bindTo(registry);
    this.skippedCounted = skipped(registry, "counted");
    this.skippedNoTable = skipped(registry, "no_table");
    this.skippedUndecodable = skipped(registry, "undecodable");
    this.thread = null;
  }

  /**
   * The group's evaluation, fed by ingest ({@link #tap()} given to {@code Ingestor.basketTap}): it tests the baskets
   * of this instance's partitions while {@code active} says so (the instance leads the group's alerts).
   *
   * @param served the table the server publishes now (segment {@code all}, floored as served)
   */
  public static LiveEvaluation onIngestPath(EvaluationSettings settings, Supplier<FlooredTable> served,
      MeterRegistry registry, java.util.function.BooleanSupplier active) {
    return new LiveEvaluation(settings, served, registry, active);
  }

  /** Where ingest hands every basket its fronts let through, before counting it (on ingest's poll thread). */
  public BasketSink tap() {
    return (basketId, eventMillis, items) -> {
      if (active.getAsBoolean()) {
        test(basketId, eventMillis, items);
      }
    };
  }

  private static Counter skipped(MeterRegistry registry, String reason) {
    return Counter.builder("pairpulse.evaluation.skipped")
        .description("Sampled baskets of the live evaluation not tested, by reason").tag("reason", reason)
        .register(registry);
  }

  /** Starts reading from the end of every partition of the basket topics (on its own thread). */
  public LiveEvaluation start() {
    if (thread != null) {
      thread.start();
    } else {
      positioned = true;
    }
    return this;
  }

  /** The running evaluation (totals only: a live evaluation keeps no log of trials). */
  public Evaluator evaluator() {
    return evaluator;
  }

  /** Tested baskets so far. */
  public long trials() {
    return evaluator.trials();
  }

  /** What stopped the evaluation thread, or null. */
  public Throwable failure() {
    return failure;
  }

  /** True once the consumer has its partitions and their end offsets (tests wait for it before producing). */
  public boolean isReading() {
    return positioned;
  }

  /** The served table's scores (as the evaluator reports them) with every method's and the hourly series. */
  @Override
  public Optional<Summary> summary() {
    return evaluator.summary().map(s -> new Summary(s.baskets(), s.k(), s.hitRate(), s.meanReciprocalRank(),
        s.horizon(), scores.methods(), scores.series()));
  }

  private void run() {
    try (KafkaConsumer<byte[], byte[]> kafka = new KafkaConsumer<>(consumerProperties, new ByteArrayDeserializer(),
        new ByteArrayDeserializer())) {
      consumer = kafka;
      List<TopicPartition> partitions = partitions(kafka);
      kafka.assign(partitions);
      kafka.seekToEnd(partitions);
      partitions.forEach(kafka::position); // resolve the end offsets now: only what arrives from here is evaluated
      positioned = true;
      LOG.info("live evaluation reading {} partitions of {} from their end (share {})", partitions.size(), topics,
          evaluator.settings().share());
      while (!stopping) {
        for (ConsumerRecord<byte[], byte[]> record : kafka.poll(POLL)) {
          handle(record);
        }
      }
    } catch (WakeupException | InterruptException e) {
      // close() woke us up
    } catch (RuntimeException | Error e) {
      failure = e;
      LOG.error("live evaluation stopped: {}", e.toString(), e);
    } finally {
      consumer = null;
    }
  }

  private List<TopicPartition> partitions(KafkaConsumer<byte[], byte[]> kafka) {
    List<TopicPartition> partitions = new ArrayList<>();
    for (String topic : topics) {
      List<PartitionInfo> infos = kafka.partitionsFor(topic, Duration.ofSeconds(60));
      if (infos == null || infos.isEmpty()) {
        throw new IllegalStateException("basket topic " + topic + " has no partitions (does it exist?)");
      }
      infos.forEach(info -> partitions.add(new TopicPartition(info.topic(), info.partition())));
    }
    return partitions;
  }

  private void handle(ConsumerRecord<byte[], byte[]> record) {
    if (record.key() != null && !evaluator.sampled(new String(record.key(), StandardCharsets.UTF_8))) {
      return; // keyed by basket id (the contract): most records are not decoded at all
    }
    BasketEvent event;
    try {
      event = decoder.decode(record.value(), record.headers());
    } catch (InvalidEventException e) {
      skippedUndecodable.increment();
      return;
    }
    PartitionFront front = fronts.computeIfAbsent(new TopicPartition(record.topic(), record.partition()),
        tp -> new PartitionFront(frontSettings));
    front.accept(event, tester);
  }

  private final BasketSink tester = this::test;

  /** Tests one assembled basket against the served table, if that table cannot hold it yet. */
  void test(String basketId, long eventMillis, List<String> items) {
    if (!evaluator.sampled(basketId)) {
      return; // unkeyed records are decoded first, then sampled
    }
    FlooredTable table = served.get();
    if (table.version() == 0) {
      skippedNoTable.increment();
      return;
    }
    if (table.table().watermarkMillis() >= eventMillis) {
      skippedCounted.increment();
      return;
    }
    if (nightly == null) {
      nightly = NightlyRebuild.daily(table);
    }
    nightly.offer(eventMillis, table);
    evaluator.evaluate(basketId, eventMillis, items, table, nightly.current());
  }

  /** Stops the thread and closes the consumer. Idempotent. */
  @Override
  public void close() {
    stopping = true;
    Consumer<byte[], byte[]> c = consumer;
    if (c != null) {
      c.wakeup();
    }
    try {
      if (thread != null && thread.isAlive()) {
        thread.join(Duration.ofSeconds(10).toMillis());
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }
}
