package org.pairpulse.ingest.worker;

import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.SortedMap;
import java.util.TreeMap;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.function.Function;
import java.util.function.Supplier;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.table.PairTable;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The single writer of a set of per-partition {@link PairEngine}s: per partition, the engine of segment
 * {@value SegmentSettings#ALL} and, when segment attributes are configured, one per segment
 * ({@link SegmentEngines}).
 *
 * <p>Every operation is a command executed in submission order, either on the worker's own thread
 * ({@code ownThread = true}: the poll loop decodes the next batch while this one is counted) or inline on
 * the caller's thread. Because the order is kept, a snapshot command sees exactly the baskets submitted
 * before it: that is what makes a checkpoint consistent with its offsets.
 *
 * <h2>Backpressure</h2>
 * At most {@code queueCapacity} commands wait; {@link #apply} blocks while the queue is full, so a slow
 * engine slows the poll loop instead of filling the heap.
 *
 * <h2>Failure</h2>
 * An exception in the engine stops the worker; later calls throw {@link IllegalStateException} with it as
 * the cause, and the ingestor stops without committing, so nothing is lost.
 *
 * <h2>Lanes</h2>
 * {@link EngineLanes} runs several workers, each the writer of its own partitions (a lane). A lane reports its own
 * state bytes and segment engines to the metrics under its index, which sum them.
 */
public final class EngineWorker implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(EngineWorker.class);

  /**
   * The engine snapshots of one partition.
   *
   * @param all the snapshot of segment {@value SegmentSettings#ALL}
   * @param segments the snapshots of the other segments by name, in name order
   */
  public record PartitionSnapshot(byte[] all, SortedMap<String, byte[]> segments) {}

  private final EngineConfig config;
  private final SegmentSettings segmentSettings;
  private final boolean segmented;
  private final IngestMetrics metrics;
  private final int lane;
  private final Map<TopicPartition, SegmentEngines> engines = new HashMap<>(); // worker thread only
  /** Attribute and reason of the skips already logged; shared by the lanes, so each is logged once per instance. */
  private final Set<String> skipsLogged;
  private final BlockingQueue<Runnable> queue;
  private final Thread thread;
  private volatile Throwable failure;
  private volatile boolean closing;

  /** A worker without segment attributes: segment {@value SegmentSettings#ALL} only. */
  public EngineWorker(EngineConfig config, IngestMetrics metrics, boolean ownThread, int queueCapacity) {
    this(config, SegmentSettings.none(), metrics, ownThread, queueCapacity);
  }

  public EngineWorker(EngineConfig config, SegmentSettings segments, IngestMetrics metrics, boolean ownThread,
      int queueCapacity) {
    this(config, segments, metrics, ownThread, queueCapacity, 0, 1, ConcurrentHashMap.newKeySet());
  }

  /**
   * Lane {@code lane} of {@code laneCount}: its thread is {@code pairpulse-engine-<lane>} when there are several
   * ({@code pairpulse-engine} otherwise), and it logs a skip only if no lane sharing {@code skipsLogged} did.
   */
  EngineWorker(EngineConfig config, SegmentSettings segments, IngestMetrics metrics, boolean ownThread,
      int queueCapacity, int lane, int laneCount, Set<String> skipsLogged) {
    this.config = Objects.requireNonNull(config, "config");
    this.segmentSettings = Objects.requireNonNull(segments, "segments");
    this.segmented = segments.enabled();
    this.metrics = Objects.requireNonNull(metrics, "metrics");
    this.lane = lane;
    this.skipsLogged = Objects.requireNonNull(skipsLogged, "skipsLogged");
    if (ownThread) {
      this.queue = new ArrayBlockingQueue<>(Math.max(1, queueCapacity));
      this.thread = new Thread(this::run, laneCount == 1 ? "pairpulse-engine" : "pairpulse-engine-" + lane);
      this.thread.setDaemon(true);
      this.thread.start();
    } else {
      this.queue = null;
      this.thread = null;
    }
  }

  public EngineConfig config() {
    return config;
  }

  public SegmentSettings segmentSettings() {
    return segmentSettings;
  }

  private void run() {
    try {
      while (true) {
        Runnable command = queue.poll(100, TimeUnit.MILLISECONDS);
        if (command != null) {
          command.run();
        } else if (closing) {
          return;
        }
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    } catch (Throwable t) {
      failure = t;
    }
  }

  /** Counts a batch of baskets of {@code partition}; blocks while the queue is full. */
  public void apply(TopicPartition partition, BasketBatch batch) throws InterruptedException {
    if (batch.size() == 0) {
      return;
    }
    submit(() -> applyNow(partition, batch));
  }

  private void applyNow(TopicPartition partition, BasketBatch batch) {
    SegmentEngines partitionEngines = enginesOf(partition);
    PairEngine all = partitionEngines.all();
    long pairsBefore = all.stats().pairUpdates();
    if (!segmented) {
      for (int i = 0; i < batch.size(); i++) {
        all.addBasket(batch.timeAt(i), batch.itemsAt(i));
      }
    } else {
      int segmentsBefore = partitionEngines.segments().size();
      for (int i = 0; i < batch.size(); i++) {
        partitionEngines.addBasket(batch.timeAt(i), batch.itemsAt(i), batch.attributesAt(i));
      }
      if (partitionEngines.segments().size() != segmentsBefore) {
        updateStateBytes();
      }
    }
    metrics.counted(batch.size(), all.stats().pairUpdates() - pairsBefore);
  }

  private SegmentEngines enginesOf(TopicPartition partition) {
    SegmentEngines partitionEngines = engines.get(partition);
    if (partitionEngines == null) {
      partitionEngines = new SegmentEngines(config, segmentSettings, this::skipped);
      engines.put(partition, partitionEngines);
      updateStateBytes();
    }
    return partitionEngines;
  }

  private void skipped(String attribute, String value, SegmentEngines.Skip reason) {
    metrics.segmentSkipped(attribute, reason.wireName());
    if (skipsLogged.add(attribute + " " + reason)) {
      if (reason == SegmentEngines.Skip.OVER_BOUND) {
        LOG.warn("segment attribute '{}' has more than segments.max.values={} values in a partition; baskets with further"
            + " values (first: '{}') count only in segment 'all' (metric pairpulse.ingest.segment.skipped; logged once)",
            attribute, segmentSettings.maxValuesPerAttribute(), shorten(value));
      } else {
        LOG.warn("segment attribute '{}' has a value that is not a plain name ('{}'): such baskets count only in segment"
            + " 'all' (metric pairpulse.ingest.segment.skipped; logged once)", attribute, shorten(value));
      }
    }
  }

  private static String shorten(String value) {
    StringBuilder out = new StringBuilder();
    value.codePoints().limit(40).forEach(c -> out.appendCodePoint(Character.isISOControl(c) ? '?' : c));
    return value.length() > 40 ? out + "..." : out.toString();
  }

  /** Snapshots of the given partitions' engines (a fresh engine's for one that has none yet). */
  public CompletableFuture<Map<TopicPartition, PartitionSnapshot>> snapshot(Collection<TopicPartition> partitions) {
    List<TopicPartition> list = new ArrayList<>(partitions);
    return call(() -> {
      Map<TopicPartition, PartitionSnapshot> out = new HashMap<>();
      for (TopicPartition tp : list) {
        SegmentEngines partitionEngines = engines.get(tp);
        if (partitionEngines == null) {
          out.put(tp, new PartitionSnapshot(Snapshots.write(new PairEngine(config)), new TreeMap<>()));
          continue;
        }
        SortedMap<String, byte[]> segments = new TreeMap<>();
        partitionEngines.segments().forEach((name, engine) -> segments.put(name, Snapshots.write(engine)));
        out.put(tp, new PartitionSnapshot(Snapshots.write(partitionEngines.all()), segments));
      }
      return out;
    });
  }

  /** Replaces a partition's engine with a restored one (built on the caller's thread, handed over). */
  public CompletableFuture<Void> restore(TopicPartition partition, PairEngine engine) {
    return restore(partition, engine, Map.of());
  }

  /**
   * Replaces a partition's engines with restored ones (built on the caller's thread, handed over). Segments of
   * attributes no longer configured are dropped.
   *
   * @throws IllegalArgumentException when an engine was written with another configuration
   */
  public CompletableFuture<Void> restore(TopicPartition partition, PairEngine engine, Map<String, PairEngine> segments) {
    if (!engine.config().equals(config)) {
      throw new IllegalArgumentException("checkpoint of " + partition + " was written with another engine configuration:\n  "
          + engine.config() + "\nconfigured:\n  " + config);
    }
    SegmentEngines restored;
    try {
      restored = new SegmentEngines(engine, segments, segmentSettings, this::skipped);
    } catch (IllegalArgumentException e) {
      throw new IllegalArgumentException("checkpoint of " + partition + ": " + e.getMessage(), e);
    }
    return call(() -> {
      engines.put(partition, restored);
      updateStateBytes();
      return null;
    });
  }

  /** Forgets partitions (revoked or lost, or about to be restored afresh). */
  public CompletableFuture<Void> drop(Collection<TopicPartition> partitions) {
    List<TopicPartition> list = new ArrayList<>(partitions);
    return call(() -> {
      list.forEach(engines::remove);
      updateStateBytes();
      return null;
    });
  }

  /** A new engine holding the merge of every partition's {@value SegmentSettings#ALL} engine (the instance's view). */
  public CompletableFuture<PairEngine> mergedCopy() {
    return call(this::mergeNow);
  }

  /**
   * Merges the partitions' engines per segment and builds a pair table of each (a refresh): segment
   * {@value SegmentSettings#ALL} first, then every segment some partition holds, in name order. A segment's
   * merge is advanced to the watermark of {@value SegmentSettings#ALL}, so that its windows end where
   * {@value SegmentSettings#ALL}'s do even when the segment's newest basket is older.
   */
  public CompletableFuture<Map<String, PairTable>> refresh(long version, long publishedAtMillis) {
    return call(() -> EngineMerges.tables(mergedNow(), version, publishedAtMillis));
  }

  /**
   * A refresh of the group view: this worker's partitions and {@code remote} ones (other instances' partitions;
   * a partition held here wins over its remote copy) merged in partition order, then as {@link #refresh}.
   */
  public CompletableFuture<Map<String, PairTable>> refresh(long version, long publishedAtMillis,
      SortedMap<TopicPartition, PartitionEngines> remote) {
    return call(() -> EngineMerges.tables(EngineMerges.mergeInOrder(config, segmentSettings.segmentEngine(config),
        withOwn(remote, false).values()), version, publishedAtMillis));
  }

  /**
   * {@code remote} (may be empty) with this worker's partitions added in partition order, own partitions winning;
   * with {@code copies}, the own engines are copies (another thread may read them). Worker thread only.
   */
  SortedMap<TopicPartition, PartitionEngines> withOwn(SortedMap<TopicPartition, PartitionEngines> remote,
      boolean copies) {
    SortedMap<TopicPartition, PartitionEngines> all = new TreeMap<>(PARTITION_ORDER);
    all.putAll(remote);
    engines.forEach((tp, own) -> {
      SortedMap<String, PairEngine> segments = new TreeMap<>();
      own.segments().forEach((name, engine) -> segments.put(name, copies ? engine.copy() : engine));
      all.put(tp, new PartitionEngines(copies ? own.all().copy() : own.all(), segments));
    });
    return all;
  }

  /** Partitions by topic, then number: the order every merge uses. */
  public static final java.util.Comparator<TopicPartition> PARTITION_ORDER = java.util.Comparator
      .comparing(TopicPartition::topic).thenComparingInt(TopicPartition::partition);

  /** New engines holding the merge of every partition's segment engines, per segment in name order. */
  public CompletableFuture<SortedMap<String, PairEngine>> mergedSegmentCopies() {
    return call(this::mergeSegmentsNow);
  }

  /** Runs {@code reader} on a copy of one partition's engine (null if the partition has none). */
  public <T> CompletableFuture<T> read(TopicPartition partition, Function<PairEngine, T> reader) {
    return call(() -> {
      SegmentEngines partitionEngines = engines.get(partition);
      return reader.apply(partitionEngines == null ? null : partitionEngines.all().copy());
    });
  }

  /** Waits until every command submitted so far has run. */
  public void drain() {
    call(() -> null).join();
  }

  /** The merge of every partition's {@value SegmentSettings#ALL} engine, in partition order. Worker thread only. */
  PairEngine mergeNow() {
    return EngineMerges.merge(config, sortedPartitions().stream().map(tp -> engines.get(tp).all()).toList());
  }

  /** The merge of every partition's segment engines, per segment, in partition order. Worker thread only. */
  SortedMap<String, PairEngine> mergeSegmentsNow() {
    return EngineMerges.mergeSegments(segmentSettings.segmentEngine(config),
        sortedPartitions().stream().map(tp -> engines.get(tp).segments()).toList());
  }

  /** True when the worker holds engines of no partition. Worker thread only. */
  boolean emptyNow() {
    return engines.isEmpty();
  }

  /** Both merges, at the same point of the command order. Worker thread only. */
  EngineMerges.Merged mergedNow() {
    return new EngineMerges.Merged(mergeNow(), mergeSegmentsNow());
  }

  private List<TopicPartition> sortedPartitions() {
    return engines.keySet().stream()
        .sorted((a, b) -> a.topic().equals(b.topic()) ? Integer.compare(a.partition(), b.partition()) : a.topic().compareTo(b.topic()))
        .toList();
  }

  private void updateStateBytes() {
    long bytes = 0;
    int segmentEngines = 0;
    for (SegmentEngines partitionEngines : engines.values()) {
      bytes += partitionEngines.stateBytes();
      segmentEngines += partitionEngines.segments().size();
    }
    metrics.stateBytes(lane, bytes);
    metrics.segmentEngines(lane, segmentEngines);
  }

  /** Runs {@code task} as a command, in submission order with the others (on the worker's thread, if it has one). */
  <T> CompletableFuture<T> call(Supplier<T> task) {
    CompletableFuture<T> result = new CompletableFuture<>();
    Runnable command = () -> {
      try {
        result.complete(task.get());
      } catch (RuntimeException | Error e) {
        result.completeExceptionally(e);
        throw e;
      }
    };
    try {
      submit(command);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      result.completeExceptionally(e);
    } catch (RuntimeException e) {
      result.completeExceptionally(e);
    }
    return result;
  }

  private void submit(Runnable command) throws InterruptedException {
    checkHealthy();
    if (thread == null) {
      try {
        command.run();
      } catch (RuntimeException | Error e) {
        failure = e;
        throw e;
      }
      return;
    }
    while (!queue.offer(command, 200, TimeUnit.MILLISECONDS)) {
      checkHealthy();
    }
  }

  private void checkHealthy() {
    Throwable t = failure;
    if (t != null) {
      throw new IllegalStateException("the engine worker failed: " + t, t);
    }
    if (thread != null && !thread.isAlive()) {
      throw new IllegalStateException("the engine worker has stopped");
    }
  }

  /** The exception that stopped the worker, or null. */
  public Throwable failure() {
    return failure;
  }

  /** Runs what was submitted, then stops the thread. */
  @Override
  public void close() {
    closing = true;
    if (thread != null) {
      try {
        thread.join(TimeUnit.SECONDS.toMillis(60));
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
    }
  }
}
