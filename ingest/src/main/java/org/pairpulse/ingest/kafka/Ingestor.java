package org.pairpulse.ingest.kafka;

import io.micrometer.core.instrument.MeterRegistry;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import java.util.UUID;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.Config;
import org.apache.kafka.clients.admin.ConfigEntry;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.config.ConfigResource;
import org.apache.kafka.common.config.TopicConfig;
import org.apache.kafka.common.errors.AuthorizationException;
import org.apache.kafka.common.errors.FencedInstanceIdException;
import org.apache.kafka.common.errors.OutOfOrderSequenceException;
import org.apache.kafka.common.errors.ProducerFencedException;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.errors.UnsupportedVersionException;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.event.LineItem;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ingest.worker.BasketBatch;
import org.pairpulse.ingest.worker.EngineLanes;
import org.pairpulse.ingest.worker.EngineWorker;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
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
 * <h2>Threading</h2>
 * {@link #start()} starts the poll thread, which owns the Kafka clients and the fronts; each engine thread
 * owns the engines of its partitions. The public methods may be called from any thread; requests that need the state
 * ({@link #view()}) are handed to the poll thread and answered through a future. {@link #close()} stops
 * the loop, takes the final checkpoint, commits and closes the clients (bounded by
 * {@code shutdown.timeout.ms}).
 */
public final class Ingestor implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(Ingestor.class);

  private final IngestConfig config;
  private final EngineConfig engineConfig;
  private final EventClock clock;
  private final IngestMetrics metrics;
  private final IngestConfig.Store store;
  private final String instanceId;
  private final FrontSettings frontSettings;
  private final long pollTimeoutMs;
  private final long checkpointIntervalMs;
  private final long checkpointIntervalBaskets;
  private final long refreshIntervalMs;
  private final SegmentSettings segmentSettings;
  private final PairTableHolder tables = new PairTableHolder();
  /** One holder per segment other than all that a refresh has published (refresh callback only writes). */
  private final Map<String, PairTableHolder> segmentTables = new java.util.concurrent.ConcurrentSkipListMap<>();

  // poll thread only
  private Consumer<byte[], byte[]> consumer;
  private Producer<byte[], byte[]> producer;
  private Consumer<byte[], byte[]> stateReader;
  /** Created when a restore first needs a state partition's log end (see {@link StateTopicStore}). */
  private Admin stateAdmin;
  private EngineLanes lanes;
  private EventDecoder decoder;
  private DeadLetters deadLetters;
  private StateTopicStore stateStore;
  private LocalDirectoryStore localStore;
  /** Group mode with {@code group.view}: the other partitions' newest checkpoints (null otherwise). */
  private GroupView groupView;
  private Admin viewAdmin;
  private final Map<TopicPartition, Slot> slots = new HashMap<>();
  private long basketsSinceCheckpoint;
  private long lastCheckpointMillis;
  private long lastRefreshMillis;
  private long lastTickMillis;
  private long tableVersion;
  private CompletableFuture<?> pendingRefresh = CompletableFuture.completedFuture(null);
  private boolean failed;

  private final Thread pollThread;
  private final ConcurrentLinkedQueue<Runnable> tasks = new ConcurrentLinkedQueue<>();
  private final Map<TopicPartition, Long> positions = new ConcurrentHashMap<>();
  private final CountDownLatch started = new CountDownLatch(1);
  private final CountDownLatch stopped = new CountDownLatch(1);
  private volatile boolean running;
  private volatile Throwable failure;
  private volatile Set<TopicPartition> assignment = Set.of();
  /** Told of every basket a front lets through, before it is counted (poll thread); null: none. */
  private volatile org.pairpulse.ingest.front.BasketSink tap;
  /** The coverage of the newest published table (group view only). */
  private volatile GroupCoverage coverage;
  /** Durations of the newest refreshes (merge and tables), in ms, oldest first; at most 1,024. */
  private final java.util.Deque<Double> refreshMillis = new java.util.concurrent.ConcurrentLinkedDeque<>();
  /** Test hook: so many coming transaction commits fail as if a rebalance had made the group generation stale. */
  private final java.util.concurrent.atomic.AtomicInteger commitsToFail = new java.util.concurrent.atomic.AtomicInteger();

  /** Per-partition state on the poll thread. */
  private static final class Slot {
    final PartitionFront front;
    long nextOffset = -1;
    /** Where this state began reading when no checkpoint existed (so a rewind can go back there); −1 otherwise. */
    long startOffset = -1;
    long checkpointId;
    boolean dirty;

    Slot(PartitionFront front) {
      this.front = front;
    }
  }

  public Ingestor(IngestConfig config, EngineConfig engineConfig, MeterRegistry registry, EventClock clock) {
    this.config = Objects.requireNonNull(config, "config");
    this.engineConfig = Objects.requireNonNull(engineConfig, "engineConfig");
    this.clock = Objects.requireNonNull(clock, "clock");
    this.metrics = new IngestMetrics(registry, clock);
    this.store = config.store();
    String id = config.getString(IngestConfig.INSTANCE_ID);
    this.instanceId = id.isEmpty() ? UUID.randomUUID().toString().substring(0, 8) : id;
    this.frontSettings = config.frontSettings();
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
   * counts it (the group's live evaluation reads the ingest path this way). Call before {@link #start()}; the sink
   * must be quick (it holds up the poll loop).
   */
  public Ingestor basketTap(org.pairpulse.ingest.front.BasketSink sink) {
    this.tap = sink;
    return this;
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
    return tables;
  }

  /**
   * The pair tables of the other segments ({@code attribute=value}, merged over this instance's partitions), by
   * name in name order: those that some refresh has published so far. Each source is refreshed with
   * {@link #pairTables()}; a segment that no owned partition holds any more gets an empty table. Empty without
   * {@code segments.attributes}.
   */
  public Map<String, PairTableSource> segmentTables() {
    return java.util.Collections.unmodifiableMap(new java.util.TreeMap<>(segmentTables));
  }

  public SegmentSettings segmentSettings() {
    return segmentSettings;
  }

  /**
   * Which partitions the newest published table holds, in group mode with {@code group.view} (see
   * {@link GroupView}); empty otherwise (the table holds this instance's partitions) and before the first refresh.
   */
  public Optional<GroupCoverage> coverage() {
    return Optional.ofNullable(coverage);
  }

  /** True when the published tables are the group view (group mode with {@code group.view}). */
  public boolean groupViewEnabled() {
    return store == IngestConfig.Store.KAFKA && config.getBoolean(IngestConfig.GROUP_VIEW);
  }

  /** How long the newest refreshes took (merge of every partition and the tables), in ms, oldest first. */
  public List<Double> recentRefreshMillis() {
    return List.copyOf(refreshMillis);
  }

  public IngestMetrics metrics() {
    return metrics;
  }

  public String instanceId() {
    return instanceId;
  }

  /** The partitions this instance owns now. */
  public Set<TopicPartition> assignment() {
    return assignment;
  }

  /** For each owned partition, the next offset the poll loop will read (records before it are handled). */
  public Map<TopicPartition, Long> positions() {
    return Map.copyOf(positions);
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
  public CompletableFuture<java.util.SortedMap<String, PairEngine>> segmentViews() {
    CompletableFuture<java.util.SortedMap<String, PairEngine>> result = new CompletableFuture<>();
    tasks.add(() -> lanes.mergedSegmentCopies().whenComplete((engines, error) -> {
      if (error != null) {
        result.completeExceptionally(error);
      } else {
        result.complete(engines);
      }
    }));
    return result;
  }

  /** A merged copy of this instance's partition engines of segment {@code all}, after everything read so far is counted. */
  public CompletableFuture<PairEngine> view() {
    CompletableFuture<PairEngine> result = new CompletableFuture<>();
    tasks.add(() -> lanes.mergedCopy().whenComplete((engine, error) -> {
      if (error != null) {
        result.completeExceptionally(error);
      } else {
        result.complete(engine);
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
        runTasks();
        ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(pollTimeoutMs));
        if (!records.isEmpty()) {
          process(records);
        }
        long now = clock.millis();
        if (basketsSinceCheckpoint >= checkpointIntervalBaskets || now - lastCheckpointMillis >= checkpointIntervalMs) {
          checkpoint(slots.keySet());
        }
        if (refreshIntervalMs > 0 && now - lastRefreshMillis >= refreshIntervalMs && pendingRefresh.isDone()) {
          refresh(now);
        }
        if (now - lastTickMillis >= 1000) {
          tick(now);
        }
      }
      runTasks();
      finalCheckpoint();
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

  private void runTasks() {
    Runnable task;
    while ((task = tasks.poll()) != null) {
      task.run();
    }
  }

  private void open() throws ExecutionException, InterruptedException, TimeoutException {
    decoder = new EventDecoder(config.eventLimits(clock));
    lanes = new EngineLanes(engineConfig, segmentSettings, metrics, config.getBoolean(IngestConfig.ENGINE_THREAD),
        config.getInt(IngestConfig.ENGINE_THREADS), config.getInt(IngestConfig.ENGINE_QUEUE_BATCHES));
    int statePartitions;
    int chunkBytes = 0;
    try (Admin admin = Admin.create(adminProps())) {
      int inputPartitions = 1;
      Map<String, TopicDescription> inputs = admin.describeTopics(config.topics()).allTopicNames().get(60, TimeUnit.SECONDS);
      for (TopicDescription d : inputs.values()) {
        inputPartitions = Math.max(inputPartitions, d.partitions().size());
      }
      boolean create = config.getBoolean(IngestConfig.TOPICS_CREATE);
      String deadLetterTopic = config.getString(IngestConfig.DEAD_LETTER_TOPIC);
      if (create) {
        ensureTopic(admin, deadLetterTopic, inputPartitions, Map.of());
      }
      statePartitions = inputPartitions;
      if (store == IngestConfig.Store.KAFKA) {
        String stateTopic = config.getString(IngestConfig.STATE_TOPIC);
        if (create) {
          ensureTopic(admin, stateTopic, inputPartitions, Map.of(TopicConfig.CLEANUP_POLICY_CONFIG, TopicConfig.CLEANUP_POLICY_COMPACT));
        }
        TopicDescription state = retrying("describe " + stateTopic,
            () -> admin.describeTopics(List.of(stateTopic)).allTopicNames().get(10, TimeUnit.SECONDS).get(stateTopic));
        statePartitions = state.partitions().size();
        ConfigResource resource = new ConfigResource(ConfigResource.Type.TOPIC, stateTopic);
        Config topicConfig = retrying("describe the configs of " + stateTopic,
            () -> admin.describeConfigs(List.of(resource)).all().get(10, TimeUnit.SECONDS).get(resource));
        ConfigEntry cleanup = topicConfig.get(TopicConfig.CLEANUP_POLICY_CONFIG);
        if (cleanup != null && !cleanup.value().contains(TopicConfig.CLEANUP_POLICY_COMPACT)) {
          LOG.warn("state topic {} has cleanup.policy={}; use compact or old checkpoints are deleted only by retention",
              stateTopic, cleanup.value());
        }
        ConfigEntry maxMessage = topicConfig.get(TopicConfig.MAX_MESSAGE_BYTES_CONFIG);
        int topicLimit = maxMessage == null ? 1_048_588 : Integer.parseInt(maxMessage.value());
        Object requestSize = config.producerOverrides().get(ProducerConfig.MAX_REQUEST_SIZE_CONFIG);
        int producerLimit = requestSize == null ? 1_048_576 : Integer.parseInt(requestSize.toString());
        chunkBytes = Math.min(topicLimit, producerLimit) - 4096;
        int configured = config.getInt(IngestConfig.STATE_CHUNK_BYTES);
        if (configured > 0) {
          chunkBytes = Math.min(chunkBytes, configured);
        }
      }
    }
    producer = new KafkaProducer<>(producerProps());
    deadLetters = new DeadLetters(producer, config.getString(IngestConfig.DEAD_LETTER_TOPIC), metrics);
    if (store == IngestConfig.Store.KAFKA) {
      producer.initTransactions();
      producer.beginTransaction();
      stateReader = new KafkaConsumer<>(stateReaderProps());
      // a restore may wait for a dead instance's open transaction to be aborted (transaction.timeout.ms)
      long restoreTimeoutMs = Math.max(Math.max(60_000, config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS)),
          config.transactionTimeoutMs() + 30_000);
      stateStore = new StateTopicStore(config.getString(IngestConfig.STATE_TOPIC), config.groupId(), statePartitions,
          chunkBytes, producer, stateReader, Duration.ofMillis(restoreTimeoutMs), this::stateLogEnd);
    } else if (store == IngestConfig.Store.LOCAL) {
      localStore = new LocalDirectoryStore(Path.of(config.getString(IngestConfig.CHECKPOINT_DIR)));
    }
    if (groupViewEnabled()) {
      long stale = config.getLong(IngestConfig.GROUP_VIEW_STALE_MS);
      viewAdmin = Admin.create(adminProps());
      Map<String, Object> viewReader = stateReaderProps();
      viewReader.put(ConsumerConfig.CLIENT_ID_CONFIG, "pairpulse-" + instanceId + "-view");
      groupView = new GroupView(config.getString(IngestConfig.STATE_TOPIC), config.groupId(), config.topics(),
          engineConfig, stale > 0 ? stale : 3 * checkpointIntervalMs, new KafkaConsumer<>(viewReader), viewAdmin,
          clock::millis, this::assignment).start();
    }
    consumer = new KafkaConsumer<>(consumerProps());
    consumer.subscribe(config.topics(), new Rebalance());
    long now = clock.millis();
    lastCheckpointMillis = now;
    lastRefreshMillis = now;
    lastTickMillis = now;
    LOG.info("ingest instance {} reading {} in group {} (checkpoints: {})", instanceId, config.topics(), config.groupId(),
        store.name().toLowerCase(java.util.Locale.ROOT));
  }

  /** The log end offset of a state partition, or −1 (poll thread). */
  private long stateLogEnd(TopicPartition statePartition) {
    if (stateAdmin == null) {
      stateAdmin = Admin.create(adminProps());
    }
    return StateTopicReader.logEndOffset(stateAdmin, statePartition);
  }

  private interface AdminCall<T> {
    T call() throws ExecutionException, InterruptedException, TimeoutException;
  }

  /** Retries an admin call for up to 30 s while a topic just created is not yet known everywhere. */
  private static <T> T retrying(String what, AdminCall<T> call) throws InterruptedException, ExecutionException, TimeoutException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
    while (true) {
      try {
        return call.call();
      } catch (ExecutionException e) {
        if (!(e.getCause() instanceof org.apache.kafka.common.errors.RetriableException) || System.nanoTime() > deadline) {
          throw new ExecutionException("cannot " + what + ": " + e.getCause(), e.getCause());
        }
        Thread.sleep(100); // back-off between retries of a retriable admin error
      }
    }
  }

  /**
   * Creates {@code topic} unless it exists, then waits until its partitions accept writes: the producer
   * writes dead letters and checkpoints to it at once, and a write racing the broker's leadership set-up
   * can fail for good (see {@link Topics}).
   */
  private static void ensureTopic(Admin admin, String topic, int partitions, Map<String, String> configs)
      throws InterruptedException, TimeoutException, ExecutionException {
    if (!admin.listTopics().names().get(60, TimeUnit.SECONDS).contains(topic)) {
      try {
        admin.createTopics(List.of(new NewTopic(topic, Optional.of(partitions), Optional.empty()).configs(configs)))
            .all().get(60, TimeUnit.SECONDS);
        LOG.info("created topic {} ({} partitions{})", topic, partitions, configs.isEmpty() ? "" : ", " + configs);
      } catch (ExecutionException e) {
        if (!(e.getCause() instanceof TopicExistsException)) {
          throw e;
        }
      }
    }
    Topics.awaitWritable(admin, List.of(topic), Duration.ofSeconds(60));
  }

  private void process(ConsumerRecords<byte[], byte[]> records) throws InterruptedException {
    for (TopicPartition tp : records.partitions()) {
      Slot slot = slots.get(tp);
      if (slot == null) {
        continue; // not ours any more (cannot happen inside one poll, kept defensive)
      }
      List<ConsumerRecord<byte[], byte[]>> list = records.records(tp);
      BasketBatch batch = new BasketBatch(list.size(), segmentSettings.enabled());
      org.pairpulse.ingest.front.BasketSink into = tap == null ? batch : tee(batch, tap);
      for (ConsumerRecord<byte[], byte[]> record : list) {
        BasketEvent event;
        try {
          event = decoder.decode(record.value(), record.headers());
        } catch (InvalidEventException e) {
          deadLetters.send(record, e.reason(), e.detail());
          continue;
        }
        switch (slot.front.accept(event, into)) {
          case ACCEPTED:
            break;
          case DUPLICATE:
            metrics.duplicate(event instanceof LineItem);
            break;
          case LATE:
            deadLetters.send(record, DeadLetterReason.LATE, "event time " + event.eventMillis()
                + " is before the partition watermark " + slot.front.watermarkMillis());
            break;
          case OVERSIZED:
            deadLetters.send(record, DeadLetterReason.OVERSIZED_BASKET, "basket '" + event.basketId()
                + "' would exceed max.basket.items");
            break;
          default:
            throw new IllegalStateException("unknown outcome");
        }
      }
      metrics.records(list.size());
      slot.nextOffset = list.get(list.size() - 1).offset() + 1;
      slot.dirty = true;
      positions.put(tp, slot.nextOffset);
      basketsSinceCheckpoint += batch.size();
      lanes.apply(tp, batch);
    }
  }

  /** {@code batch} first, then {@code also}, with the basket's attributes for the batch. */
  private static org.pairpulse.ingest.front.BasketSink tee(BasketBatch batch, org.pairpulse.ingest.front.BasketSink also) {
    return org.pairpulse.ingest.front.BasketSink.withAttributes((id, time, items, attributes) -> {
      batch.basket(id, time, items, attributes);
      also.basket(id, time, items);
    });
  }

  private void tick(long now) {
    lastTickMillis = now;
    metrics.tick();
    // past transaction markers (and aborted records) after a partition's last record: the consumer has moved on, so
    // the state covers up to its position (else a quiet partition of a transactional producer would look behind)
    slots.forEach((tp, slot) -> {
      if (slot.nextOffset < 0) {
        return;
      }
      try {
        long position = consumer.position(tp, Duration.ZERO);
        if (position > slot.nextOffset) {
          slot.nextOffset = position;
          slot.dirty = true;
          positions.put(tp, position);
        }
      } catch (KafkaException | IllegalStateException e) {
        // position not known right now: the next tick tries again
      }
    });
    for (TopicPartition tp : slots.keySet()) {
      consumer.currentLag(tp).ifPresent(lag -> metrics.lag(tp.topic(), tp.partition(), lag));
    }
  }

  private void refresh(long now) {
    lastRefreshMillis = now;
    long startNanos = System.nanoTime();
    CompletableFuture<Map<String, PairTable>> refreshed;
    GroupCoverage covered;
    if (groupView != null) {
      Set<TopicPartition> owned = Set.copyOf(slots.keySet());
      java.util.SortedMap<TopicPartition, org.pairpulse.ingest.worker.PartitionEngines> remote = groupView.remote(owned);
      covered = groupView.coverage(owned, Map.copyOf(positions), now);
      refreshed = lanes.refresh(++tableVersion, now, remote);
    } else {
      covered = null;
      refreshed = lanes.refresh(++tableVersion, now);
    }
    pendingRefresh = refreshed.thenAccept(tables -> {
      long tookNanos = System.nanoTime() - startNanos;
      metrics.refreshed(tookNanos); // before the tables are visible: a reader sees both
      refreshMillis.addLast(tookNanos / 1e6);
      while (refreshMillis.size() > 1024) {
        refreshMillis.pollFirst();
      }
      coverage = covered;
      publish(tables);
    });
  }

  /** Publishes a refresh: all, every segment in it, and an empty table for known segments no partition holds now. */
  private void publish(Map<String, PairTable> refreshed) {
    PairTable all = refreshed.get(SegmentSettings.ALL);
    tables.publish(all);
    refreshed.forEach((name, table) -> {
      if (!name.equals(SegmentSettings.ALL)) {
        segmentTables.computeIfAbsent(name, n -> new PairTableHolder()).publish(table);
      }
    });
    segmentTables.forEach((name, holder) -> {
      if (!refreshed.containsKey(name)) {
        holder.publish(new PairTable(all.version(), all.publishedAtMillis(), all.watermarkMillis(), all.sortMeasure(),
            Map.of(), List.of()));
      }
    });
  }

  // ------------------------------------------------------------------ checkpoints

  /**
   * Checkpoints the dirty partitions among {@code candidates} (group mode: all dirty ones, one transaction).
   * Returns false if the transaction failed to commit: then it was aborted and the partitions were rewound
   * to their last checkpoints, to be read again.
   */
  private boolean checkpoint(Collection<TopicPartition> candidates) {
    long now = clock.millis();
    List<TopicPartition> dirty = new ArrayList<>();
    for (TopicPartition tp : (store == IngestConfig.Store.KAFKA ? slots.keySet() : candidates)) {
      Slot slot = slots.get(tp);
      if (slot != null && slot.dirty) {
        dirty.add(tp);
      }
    }
    if (dirty.isEmpty() || store == IngestConfig.Store.NONE) {
      dirty.forEach(tp -> slots.get(tp).dirty = false);
      basketsSinceCheckpoint = 0;
      lastCheckpointMillis = now;
      return true;
    }
    long startNanos = System.nanoTime();
    Map<TopicPartition, EngineWorker.PartitionSnapshot> engines = lanes.snapshot(dirty).join();
    List<PartitionCheckpoint> checkpoints = new ArrayList<>(dirty.size());
    for (TopicPartition tp : dirty) {
      Slot slot = slots.get(tp);
      EngineWorker.PartitionSnapshot snapshot = engines.get(tp);
      checkpoints.add(new PartitionCheckpoint(tp.topic(), tp.partition(), slot.nextOffset, slot.checkpointId + 1, now,
          slot.front.encode(), snapshot.all(), snapshot.segments()));
    }
    long bytes = 0;
    if (store == IngestConfig.Store.LOCAL) {
      Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
      for (PartitionCheckpoint cp : checkpoints) {
        bytes += localStore.save(cp);
        offsets.put(new TopicPartition(cp.topic(), cp.partition()), new OffsetAndMetadata(cp.nextOffset()));
      }
      try {
        consumer.commitSync(offsets); // for lag tools only: the files are the truth
      } catch (KafkaException e) {
        LOG.warn("offset commit after a local checkpoint failed ({}); the checkpoint files stand", e.toString());
      }
    } else {
      try {
        StateTopicStore.Written written = stateStore.write(checkpoints);
        producer.sendOffsetsToTransaction(written.offsets(), consumer.groupMetadata());
        if (commitsToFail.getAndUpdate(n -> Math.max(0, n - 1)) > 0) {
          throw new org.apache.kafka.clients.consumer.CommitFailedException("injected by a test: generation id is not valid");
        }
        producer.commitTransaction();
        bytes = written.bytes();
      } catch (ProducerFencedException | FencedInstanceIdException | OutOfOrderSequenceException
          | AuthorizationException | UnsupportedVersionException e) {
        throw e; // fatal: another instance took over this transactional id, or the cluster refuses us
      } catch (KafkaException e) {
        metrics.checkpointFailed();
        LOG.warn("checkpoint of {} failed ({}); aborting and rereading from the last checkpoint", dirty, e.toString());
        producer.abortTransaction();
        producer.beginTransaction();
        rewind(new ArrayList<>(slots.keySet()));
        return false;
      }
      producer.beginTransaction();
    }
    for (PartitionCheckpoint cp : checkpoints) {
      Slot slot = slots.get(new TopicPartition(cp.topic(), cp.partition()));
      slot.checkpointId = cp.checkpointId();
      slot.startOffset = -1;
      slot.dirty = false;
    }
    basketsSinceCheckpoint = 0;
    lastCheckpointMillis = now;
    metrics.checkpointed(bytes, System.nanoTime() - startNanos);
    LOG.debug("checkpointed {} ({} bytes)", dirty, bytes);
    return true;
  }

  /**
   * The checkpoint at shutdown. If its transaction fails to commit (typically because a rebalance, such as
   * another instance leaving at the same moment, made the group generation stale), the partitions were
   * rewound to their last checkpoints: read them again up to where this instance had stopped and commit
   * again, until half of {@code shutdown.timeout.ms} is spent (the rest is for closing the clients).
   * Without this, a clean stop could leave the group's committed state behind what the instance had read.
   */
  private void finalCheckpoint() throws InterruptedException {
    long started = System.nanoTime();
    long deadline = started + TimeUnit.MILLISECONDS.toNanos(config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS) / 2);
    Map<TopicPartition, Long> target = new HashMap<>();
    slots.forEach((tp, slot) -> {
      if (slot.nextOffset >= 0) {
        target.put(tp, slot.nextOffset);
      }
    });
    int attempts = 1;
    while (!checkpoint(slots.keySet())) {
      if (System.nanoTime() > deadline) {
        LOG.warn("final checkpoint of instance {} failed {} times; its partitions resume from their last committed checkpoints",
            instanceId, attempts);
        return;
      }
      LOG.info("final checkpoint of instance {} failed; reading its partitions again up to {} before committing again",
          instanceId, target);
      while (!reachedTargets(target) && System.nanoTime() < deadline) {
        runTasks();
        ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(pollTimeoutMs));
        if (!records.isEmpty()) {
          process(records);
        }
      }
      attempts++;
    }
    if (attempts > 1) {
      LOG.info("final checkpoint of instance {} committed at attempt {}, {} ms after the stop", instanceId, attempts,
          TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - started));
    }
  }

  /** True when every partition of {@code target} this instance still owns is read up to its target offset. */
  private boolean reachedTargets(Map<TopicPartition, Long> target) {
    for (Map.Entry<TopicPartition, Long> e : target.entrySet()) {
      Slot slot = slots.get(e.getKey());
      if (slot != null && slot.nextOffset < e.getValue()) {
        return false;
      }
    }
    return true;
  }

  /** Test hook: the next {@code n} transaction commits fail like a commit with a stale group generation. */
  void failNextCommits(int n) {
    commitsToFail.set(n);
  }

  /** Drops the state of {@code partitions} and reloads it from their checkpoints (seeking the consumer). */
  private void rewind(Collection<TopicPartition> partitions) {
    Map<TopicPartition, Long> starts = new HashMap<>();
    for (TopicPartition tp : partitions) {
      Slot slot = slots.get(tp);
      if (slot != null && slot.startOffset >= 0) {
        starts.put(tp, slot.startOffset);
      }
    }
    forget(partitions);
    restore(partitions, starts);
  }

  private void restore(Collection<TopicPartition> partitions) {
    restore(partitions, Map.of());
  }

  /**
   * Loads the partitions' checkpoints and seeks to the offsets they cover. A partition without a checkpoint
   * starts empty at {@code starts} (a rewind), else at its committed offset, else where the consumer's reset
   * policy puts it; that start is remembered, so that a later rewind goes back to it.
   */
  private void restore(Collection<TopicPartition> partitions, Map<TopicPartition, Long> starts) {
    if (partitions.isEmpty()) {
      return;
    }
    Map<TopicPartition, OffsetAndMetadata> committed = store == IngestConfig.Store.NONE
        ? Map.of() : consumer.committed(new HashSet<>(partitions));
    for (TopicPartition tp : partitions) {
      Optional<PartitionCheckpoint> checkpoint = switch (store) {
        case KAFKA -> stateStore.load(tp, committed.get(tp));
        case LOCAL -> localStore.load(tp.topic(), tp.partition());
        case NONE -> Optional.empty();
      };
      Slot slot;
      if (checkpoint.isPresent()) {
        PartitionCheckpoint cp = checkpoint.get();
        slot = new Slot(PartitionFront.decode(cp.front(), frontSettings));
        Map<String, PairEngine> segments = new HashMap<>();
        cp.segments().forEach((name, bytes) -> segments.put(name, Snapshots.read(bytes)));
        List<String> dropped = SegmentEngines.droppedOnRestore(segments, segmentSettings);
        if (!dropped.isEmpty()) {
          LOG.warn("{}: the checkpoint holds segments {} of attributes no longer in segments.attributes; they are dropped",
              tp, dropped);
        }
        lanes.restore(tp, Snapshots.read(cp.engine()), segments).join();
        consumer.seek(tp, cp.nextOffset());
        slot.nextOffset = cp.nextOffset();
        slot.checkpointId = cp.checkpointId();
        positions.put(tp, cp.nextOffset());
        metrics.restored();
        LOG.info("restored {} from checkpoint {} (next offset {})", tp, cp.checkpointId(), cp.nextOffset());
      } else {
        slot = new Slot(new PartitionFront(frontSettings));
        lanes.drop(List.of(tp)).join();
        long start;
        if (starts.containsKey(tp)) {
          start = starts.get(tp);
        } else if (committed.get(tp) != null) {
          start = committed.get(tp).offset();
          if (store != IngestConfig.Store.NONE) {
            LOG.warn("{} has committed offset {} but no checkpoint: its earlier baskets are not in this state", tp, start);
          }
        } else {
          start = consumer.position(tp);
        }
        consumer.seek(tp, start);
        slot.startOffset = start;
      }
      slots.put(tp, slot);
    }
    assignment = Set.copyOf(slots.keySet());
  }

  private void forget(Collection<TopicPartition> partitions) {
    lanes.drop(partitions).join();
    for (TopicPartition tp : partitions) {
      slots.remove(tp);
      positions.remove(tp);
      metrics.forgetPartition(tp.topic(), tp.partition());
    }
    assignment = Set.copyOf(slots.keySet());
  }

  /** Checkpoints what is revoked (and, in group mode, everything dirty), restores what is assigned. */
  private final class Rebalance implements ConsumerRebalanceListener {
    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
      if (partitions.isEmpty()) {
        return;
      }
      if (!failed) {
        checkpoint(partitions);
      }
      forget(partitions);
    }

    @Override
    public void onPartitionsLost(Collection<TopicPartition> partitions) {
      LOG.warn("lost {} without a clean hand-over; their work since the last checkpoint is redone by the next owner", partitions);
      if (store == IngestConfig.Store.KAFKA && !failed) {
        producer.abortTransaction();
        producer.beginTransaction();
        forget(partitions);
        rewind(new ArrayList<>(slots.keySet()));
      } else {
        forget(partitions);
      }
    }

    @Override
    public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
      if (!failed) {
        restore(partitions);
      }
    }
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
    if (consumer != null) {
      try {
        consumer.close(CloseOptions.timeout(Duration.ofSeconds(10)));
      } catch (RuntimeException e) {
        LOG.warn("closing the consumer: {}", e.toString());
      }
    }
    if (producer != null) {
      if (store == IngestConfig.Store.KAFKA) {
        // after a clean stop the open transaction is empty (the final checkpoint committed everything);
        // after a failure it holds uncommitted work. Either way abort it: a producer closed with an open
        // transaction waits out its close timeout.
        try {
          producer.abortTransaction();
        } catch (RuntimeException e) {
          LOG.debug("abort on close: {}", e.toString());
        }
      }
      try {
        producer.close(Duration.ofSeconds(10));
      } catch (RuntimeException e) {
        LOG.warn("closing the producer: {}", e.toString());
      }
    }
    if (stateReader != null) {
      stateReader.close(CloseOptions.timeout(Duration.ofSeconds(5)));
    }
    if (groupView != null) {
      groupView.close();
    }
    if (viewAdmin != null) {
      viewAdmin.close(Duration.ofSeconds(5));
    }
    if (stateAdmin != null) {
      stateAdmin.close(Duration.ofSeconds(5));
    }
    if (lanes != null) {
      lanes.close();
    }
  }

  // ------------------------------------------------------------------ client properties

  private Map<String, Object> common() {
    Map<String, Object> props = new HashMap<>();
    props.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, String.join(",", config.bootstrapServers()));
    return props;
  }

  private Map<String, Object> adminProps() {
    Map<String, Object> props = common();
    props.put(AdminClientConfig.CLIENT_ID_CONFIG, "pairpulse-" + instanceId + "-admin");
    props.putAll(config.clientOverrides("admin"));
    return props;
  }

  Map<String, Object> consumerProps() {
    Map<String, Object> props = common();
    props.put(ConsumerConfig.GROUP_ID_CONFIG, config.groupId());
    props.put(ConsumerConfig.CLIENT_ID_CONFIG, "pairpulse-" + instanceId);
    props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    props.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
    props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    props.put(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG, CooperativeStickyAssignor.class.getName());
    props.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 2000);
    props.put(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, 4 << 20);
    props.putAll(config.clientOverrides("consumer"));
    props.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    props.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    return props;
  }

  private Map<String, Object> stateReaderProps() {
    Map<String, Object> props = common();
    props.put(ConsumerConfig.CLIENT_ID_CONFIG, "pairpulse-" + instanceId + "-state");
    props.putAll(config.clientOverrides("consumer"));
    props.remove(ConsumerConfig.GROUP_ID_CONFIG);
    props.remove(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG);
    props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    props.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    props.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    return props;
  }

  private Map<String, Object> producerProps() {
    Map<String, Object> props = common();
    props.put(ProducerConfig.CLIENT_ID_CONFIG, "pairpulse-" + instanceId + "-producer");
    props.put(ProducerConfig.ACKS_CONFIG, "all");
    props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    props.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    props.put(ProducerConfig.BATCH_SIZE_CONFIG, 256 * 1024);
    props.put(ProducerConfig.COMPRESSION_TYPE_CONFIG, "lz4");
    if (store == IngestConfig.Store.KAFKA) {
      props.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, "pairpulse-" + config.groupId() + "-" + instanceId);
    }
    props.putAll(config.producerOverrides());
    props.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    props.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    return props;
  }

  /** The published table of the last refresh (empty before one). */
  PairTable currentTable() {
    return tables.current();
  }
}
