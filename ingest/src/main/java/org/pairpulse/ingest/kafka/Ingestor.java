package org.pairpulse.ingest.kafka;

import io.micrometer.core.instrument.MeterRegistry;
import java.time.Duration;
import java.util.Collection;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import java.util.SortedMap;
import java.util.UUID;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ingest.worker.BasketBatch;
import org.pairpulse.ingest.worker.EngineLanes;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableSource;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Reads basket events from Kafka into per-partition state: the ingest of pairpulse.
 *
 * <h2>Use</h2>
 * <pre>{@code
 * IngestConfig config = new IngestConfig(Map.of("bootstrap.servers", "host:9092", "topics", "baskets"));
 * try (Ingestor ingestor = new Ingestor(config, EngineConfig.defaults(), registry, EventClock.system())) {
 *   ingestor.start().installShutdownHook();
 *   PairTableSource tables = ingestor.pairTables(); // a new table every refresh.interval.ms
 *   ...
 * }
 * }</pre>
 *
 * <h2>What happens to a record</h2>
 * The poll loop decodes it ({@link EventDecoder}); an unusable record goes to the dead-letter topic with
 * its reason and processing goes on. A decoded event passes its partition's {@link PartitionFront}
 * (lateness, dedupe, line-item assembly); the baskets that come out are counted by the partition's engine
 * on an engine thread: {@code engine.threads} lanes, partition p on lane p mod lanes ({@link EngineLanes}). State is
 * per input partition, so partitions move freely between instances of one consumer group.
 *
 * <h2>Segments</h2>
 * With {@code segments.attributes} (see {@link org.pairpulse.ingest.segment.SegmentSettings}), each partition also
 * keeps one engine per segment {@code <attribute>=<value>} (bounded by {@code segments.max.values} per attribute);
 * checkpoints hold them all, and every refresh publishes one table per segment ({@link #segmentTables()}) beside
 * the table of every basket ({@link #pairTables()}). Without segment attributes the engine thread counts each
 * basket once, with no lookup and no allocation beyond what it did before.
 *
 * <h2>Checkpoints</h2>
 * Every {@code checkpoint.interval.ms} or {@code checkpoint.interval.baskets}, when partitions are revoked,
 * and at shutdown, the dirty partitions are checkpointed (front + engine + next offset). In group mode
 * ({@code checkpoint.store=kafka}) the checkpoint chunks, the dead letters and the consumer offsets of the
 * interval form one Kafka transaction: after a crash the group resumes from the last checkpoint and
 * neither loses nor double-counts a basket. With {@code local} the checkpoints are files (single node);
 * with {@code none} there are none.
 *
 * <h2>One consumer</h2>
 * An instance reads with one {@code KafkaConsumer}. In group mode it subscribes to the state topic (and to the
 * compacted topics it follows, {@link #followKey}) beside the basket topics; every member gets every partition of
 * those ({@link SharedTopicsAssignor}), and the poll loop hands their records to the {@link StateTap}, which serves
 * the checkpoint restores (a partition being restored is paused until its checkpoint has been read, while the loop
 * goes on), the group view and the followed keys.
 *
 * <h2>Threading</h2>
 * {@link #start()} starts the poll thread, which owns the Kafka clients and the fronts; each engine thread
 * owns the engines of its partitions. The public methods may be called from any thread; requests that need the state
 * ({@link #view()}) are handed to the poll thread and answered through a future. {@link #close()} stops
 * the loop, takes the final checkpoint, commits and closes the clients (bounded by
 * {@code shutdown.timeout.ms}).
 *
 * <h2>Inside</h2>
 * This class holds the poll loop and the lifecycle. Its helpers, one job each: {@link TopicSetup} (topics at
 * start), {@link KafkaClientProperties} (every client's settings), {@link CheckpointStore} (save, load and commit,
 * one implementation per {@code checkpoint.store}), {@link Checkpointer} (when to checkpoint, and the final one),
 * {@link PartitionSlots} (restore, rewind, rebalance), {@link StateTap} (the state topic as the poll loop reads it),
 * {@link TablePublisher} (refreshes, the group view and what they published) and {@link DeadLetters}.
 */
public final class Ingestor implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(Ingestor.class);
  /** How often the lag gauges and the positions past transaction markers are brought up to date. */
  private static final long TICK_MS = 1000;

  private final IngestConfig config;
  private final EngineConfig engineConfig;
  private final EventClock clock;
  private final IngestMetrics metrics;
  private final String instanceId;
  private final KafkaClientProperties clients;
  private final long pollTimeoutMs;
  private final long checkpointIntervalMs;
  private final long checkpointIntervalBaskets;
  private final long refreshIntervalMs;
  private final SegmentSettings segmentSettings;
  private final TablePublisher published;

  // poll thread only
  private Consumer<byte[], byte[]> consumer;
  private Producer<byte[], byte[]> producer;
  private volatile CheckpointStore store;
  private EngineLanes lanes;
  private RecordRouter router;
  private Checkpointer checkpoints;
  private long lastRefreshMillis;
  private long lastTickMillis;
  private boolean failed;

  private final Thread pollThread;
  private final ConcurrentLinkedQueue<Runnable> tasks = new ConcurrentLinkedQueue<>();
  private final CountDownLatch started = new CountDownLatch(1);
  private final CountDownLatch stopped = new CountDownLatch(1);
  /** The owned partitions; set once on the poll thread, read by the public accessors from any thread. */
  private volatile PartitionSlots slots;
  private volatile boolean running;
  private volatile Throwable failure;
  /** The compacted keys to follow, given before the start. */
  private final List<CommittedKey> followed = new java.util.ArrayList<>();
  /** The state topic as the consumer reads it (group mode; poll thread); null otherwise. */
  private StateTap stateTap;
  /** Told of every basket a front lets through, before it is counted (poll thread); null: none. */
  private volatile BasketSink tap;
  /** Test hook: so many coming transaction commits fail as if a rebalance had made the group generation stale. */
  private final AtomicInteger commitsToFail = new AtomicInteger();

  public Ingestor(IngestConfig config, EngineConfig engineConfig, MeterRegistry registry, EventClock clock) {
    this.config = Objects.requireNonNull(config, "config");
    this.engineConfig = Objects.requireNonNull(engineConfig, "engineConfig");
    this.clock = Objects.requireNonNull(clock, "clock");
    this.metrics = new IngestMetrics(registry, clock);
    this.published = new TablePublisher(metrics);
    String id = config.getString(IngestConfig.INSTANCE_ID);
    this.instanceId = id.isEmpty() ? UUID.randomUUID().toString().substring(0, 8) : id;
    this.clients = new KafkaClientProperties(config, instanceId);
    this.segmentSettings = config.segmentSettings();
    for (String attribute : segmentSettings.attributes()) {
      metrics.segmentAttribute(attribute);
    }
    this.pollTimeoutMs = config.getLong(IngestConfig.POLL_TIMEOUT_MS);
    this.checkpointIntervalMs = config.getLong(IngestConfig.CHECKPOINT_INTERVAL_MS);
    this.checkpointIntervalBaskets = config.getLong(IngestConfig.CHECKPOINT_INTERVAL_BASKETS);
    this.refreshIntervalMs = config.getLong(IngestConfig.REFRESH_INTERVAL_MS);
    this.pollThread = new Thread(this::runLoop, "pairpulse-ingest-" + instanceId);
  }

  /** Starts the poll loop and waits until the clients are set up (or setup failed). */
  public Ingestor start() {
    running = true;
    pollThread.start();
    try {
      started.await();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
    Throwable t = failure;
    if (t != null) {
      throw new IllegalStateException("ingest failed to start: " + t.getMessage(), t);
    }
    return this;
  }

  /**
   * Hands every basket the partitions' fronts let through to {@code sink} too, on the poll thread, before the engine
   * counts it (ops' live evaluation reads the ingest path this way, so an instance needs no second consumer). Call
   * before {@link #start()}; the sink must be quick (it holds up the poll loop).
   */
  public Ingestor basketTap(BasketSink sink) {
    this.tap = sink;
    return this;
  }

  /**
   * Follows the newest committed value of {@code key} in the compacted {@code topic} with this instance's one
   * consumer, beside the basket topics and the state topic (group mode only; every member reads every partition of
   * it). Call before {@link #start()}; the topic must exist by then.
   */
  public CommittedKey followKey(String topic, byte[] key) {
    if (config.store() != IngestConfig.Store.KAFKA) {
      throw new IllegalStateException("only group mode (checkpoint.store=kafka) follows compacted topics");
    }
    CommittedKey followed = new CommittedKey(topic, key);
    this.followed.add(followed);
    return followed;
  }

  /** Closes the ingestor cleanly (checkpoint, commit, close) when the JVM is asked to stop (SIGTERM, Ctrl-C). */
  public Ingestor installShutdownHook() {
    Runtime.getRuntime().addShutdownHook(new Thread(this::close, "pairpulse-ingest-shutdown"));
    return this;
  }

  /**
   * The pair tables of segment {@code all} (every basket) of this instance's partitions, refreshed every
   * {@code refresh.interval.ms}.
   */
  public PairTableSource pairTables() {
    return published.all();
  }

  /**
   * The pair tables of the other segments ({@code attribute=value}, merged over this instance's partitions), by
   * name in name order: those that some refresh has published so far. Each source is refreshed with
   * {@link #pairTables()}; a segment that no owned partition holds any more gets an empty table. Empty without
   * {@code segments.attributes}.
   */
  public Map<String, PairTableSource> segmentTables() {
    return published.segments();
  }

  public SegmentSettings segmentSettings() {
    return segmentSettings;
  }

  /**
   * Which partitions the newest published table holds, in group mode with {@code group.view} (see
   * {@link GroupView}); empty otherwise (the table holds this instance's partitions) and before the first refresh.
   */
  public Optional<GroupCoverage> coverage() {
    return published.coverage();
  }

  /** True when the published tables are the group view (group mode with {@code group.view}). */
  public boolean groupViewEnabled() {
    return config.groupViewEnabled();
  }

  /** How long the newest refreshes took (merge of every partition and the tables), in ms, oldest first. */
  public List<Double> recentRefreshMillis() {
    return published.recentRefreshMillis();
  }

  public IngestMetrics metrics() {
    return metrics;
  }

  public String instanceId() {
    return instanceId;
  }

  /** The partitions this instance owns now. */
  public Set<TopicPartition> assignment() {
    PartitionSlots owned = slots;
    return owned == null ? Set.of() : owned.assignment();
  }

  /** For each owned partition, the next offset the poll loop will read (records before it are handled). */
  public Map<TopicPartition, Long> positions() {
    PartitionSlots owned = slots;
    return owned == null ? Map.of() : owned.positions();
  }

  /** The exception that stopped the ingestor, or null while it runs or after a clean stop. */
  public Throwable failure() {
    return failure;
  }

  public boolean isRunning() {
    return running && stopped.getCount() > 0;
  }

  /**
   * Merged copies of this instance's segment engines per segment (not {@code all}), after everything read so far is
   * counted.
   */
  public CompletableFuture<SortedMap<String, PairEngine>> segmentViews() {
    return onPollThread(() -> lanes.mergedSegmentCopies());
  }

  /** A merged copy of this instance's partition engines of segment {@code all}, after everything read so far is counted. */
  public CompletableFuture<PairEngine> view() {
    return onPollThread(() -> lanes.mergedCopy());
  }

  /** Runs {@code request} on the poll thread (after the batches handed to the lanes so far) and relays its answer. */
  private <T> CompletableFuture<T> onPollThread(java.util.function.Supplier<CompletableFuture<T>> request) {
    CompletableFuture<T> result = new CompletableFuture<>();
    tasks.add(() -> request.get().whenComplete((value, error) -> {
      if (error != null) {
        result.completeExceptionally(error);
      } else {
        result.complete(value);
      }
    }));
    return result;
  }

  // ------------------------------------------------------------------ the poll loop

  private void runLoop() {
    try {
      open();
      started.countDown();
      while (running) {
        pollOnce();
        long now = clock.millis();
        if (checkpoints.due(now)) {
          checkpoint(slots.owned());
        }
        if (refreshIntervalMs > 0 && now - lastRefreshMillis >= refreshIntervalMs && !published.refreshing()) {
          lastRefreshMillis = now;
          published.refresh(lanes, Set.copyOf(slots.owned()), slots.positions(), now);
        }
        if (now - lastTickMillis >= TICK_MS) {
          tick(now);
        }
      }
      runTasks();
      // half of shutdown.timeout.ms: the rest is for closing the clients
      checkpoints.finalCheckpoint(config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS) / 2, clock::millis, this::pollOnce);
    } catch (Throwable t) {
      failed = true;
      failure = t;
      LOG.error("ingest instance {} stopped on an error; nothing after its last checkpoint is committed", instanceId, t);
    } finally {
      started.countDown();
      closeClients();
      running = false;
      stopped.countDown();
    }
  }

  /** One round of the loop's reading: tasks, a poll, its records, then what became due (restores, followed keys). */
  private void pollOnce() throws InterruptedException {
    runTasks();
    ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(pollTimeoutMs));
    if (!records.isEmpty()) {
      process(records);
    }
    if (stateTap != null) {
      stateTap.afterPoll();
    }
    slots.restorePending();
  }

  private void runTasks() {
    Runnable task;
    while ((task = tasks.poll()) != null) {
      task.run();
    }
  }

  private void open() throws ExecutionException, InterruptedException, TimeoutException {
    lanes = new EngineLanes(engineConfig, segmentSettings, metrics, config.getBoolean(IngestConfig.ENGINE_THREAD),
        config.getInt(IngestConfig.ENGINE_THREADS), config.getInt(IngestConfig.ENGINE_QUEUE_BATCHES));
    TopicSetup.Layout layout = TopicSetup.prepare(config, clients.admin("admin"));
    producer = new KafkaProducer<>(clients.producer());
    router = new RecordRouter(new EventDecoder(config.eventLimits(clock)),
        new DeadLetters(producer, config.getString(IngestConfig.DEAD_LETTER_TOPIC), metrics), metrics);
    store = CheckpointStore.open(config, layout, producer, clients, commitsToFail);
    stateTap = store.stateTap().orElse(null);
    List<String> shared = List.of();
    if (stateTap != null) {
      followed.forEach(stateTap::follow);
      shared = stateTap.sharedTopics();
    }
    if (config.groupViewEnabled()) {
      published.openGroupView(config, clients, engineConfig, clock::millis, this::assignment,
          Objects.requireNonNull(stateTap, "the group view needs the state-topic store"));
    }
    consumer = new KafkaConsumer<>(clients.groupConsumer(shared));
    slots = new PartitionSlots(consumer, store, lanes, config.frontSettings(), segmentSettings, metrics);
    ConsumerRebalanceListener listener = slots.listener(this::checkpoint, () -> failed);
    List<String> subscribed = new java.util.ArrayList<>(config.topics());
    subscribed.addAll(shared);
    consumer.subscribe(subscribed, stateTap == null ? listener : stateTap.around(consumer, listener));
    long now = clock.millis();
    checkpoints = new Checkpointer(instanceId, slots, store, lanes, consumer, metrics, checkpointIntervalMs,
        checkpointIntervalBaskets, now);
    lastRefreshMillis = now;
    lastTickMillis = now;
    LOG.info("ingest instance {} reading {} in group {} (checkpoints: {})", instanceId, config.topics(), config.groupId(),
        config.store().name().toLowerCase(java.util.Locale.ROOT));
  }

  private void process(ConsumerRecords<byte[], byte[]> records) throws InterruptedException {
    for (TopicPartition tp : records.partitions()) {
      if (stateTap != null && stateTap.reads(tp.topic())) {
        stateTap.accept(records.records(tp));
        continue;
      }
      PartitionSlots.Slot slot = slots.get(tp);
      if (slot == null) {
        continue; // not ours any more (cannot happen inside one poll, kept defensive)
      }
      List<ConsumerRecord<byte[], byte[]>> list = records.records(tp);
      BasketBatch batch = new BasketBatch(list.size(), segmentSettings.enabled());
      router.route(list, slot.front, batch, tap);
      metrics.records(list.size());
      slots.advance(tp, slot, list.get(list.size() - 1).offset() + 1);
      checkpoints.counted(batch.size());
      lanes.apply(tp, batch);
    }
  }

  private void tick(long now) {
    lastTickMillis = now;
    metrics.tick();
    published.tick();
    slots.advanceToPositions();
    for (TopicPartition tp : slots.owned()) {
      consumer.currentLag(tp).ifPresent(lag -> metrics.lag(tp.topic(), tp.partition(), lag));
    }
  }

  // ------------------------------------------------------------------ checkpoints

  /** Checkpoints the dirty partitions among {@code candidates}; false when the commit failed (see {@link Checkpointer}). */
  private boolean checkpoint(Collection<TopicPartition> candidates) {
    return checkpoints.checkpoint(candidates, clock.millis());
  }

  /** Test hook: on the poll thread, stops the loop right after a checkpoint (as a periodic one at the moment of a stop). */
  void stopRightAfterACheckpoint() {
    tasks.add(() -> {
      running = false;
      checkpoint(slots.owned());
    });
  }

  /** Test hook: the next {@code n} transaction commits fail like a commit with a stale group generation. */
  void failNextCommits(int n) {
    commitsToFail.set(n);
  }

  // ------------------------------------------------------------------ shutdown

  /** Stops the loop, takes the final checkpoint, commits and closes; bounded by {@code shutdown.timeout.ms}. */
  @Override
  public void close() {
    if (!running && stopped.getCount() > 0 && pollThread.getState() == Thread.State.NEW) {
      return;
    }
    running = false;
    try {
      if (!stopped.await(config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS), TimeUnit.MILLISECONDS)) {
        LOG.error("ingest instance {} did not stop within {} ms", instanceId, config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS));
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }

  private void closeClients() {
    followed.forEach(CommittedKey::close);
    if (consumer != null) {
      closeQuietly("the consumer", () -> consumer.close(CloseOptions.timeout(Duration.ofSeconds(10))));
    }
    if (producer != null) {
      if (store != null) {
        store.abandonOpen();
      }
      closeQuietly("the producer", () -> producer.close(Duration.ofSeconds(10)));
    }
    published.close();
    if (store != null) {
      store.close();
    }
    if (lanes != null) {
      lanes.close();
    }
  }

  private static void closeQuietly(String what, Runnable close) {
    try {
      close.run();
    } catch (RuntimeException e) {
      LOG.warn("closing {}: {}", what, e.toString());
    }
  }

  /** The published table of the last refresh (empty before one). */
  PairTable currentTable() {
    return published.current();
  }
}
