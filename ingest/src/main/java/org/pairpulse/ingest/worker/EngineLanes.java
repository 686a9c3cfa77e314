package org.pairpulse.ingest.worker;

import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.SortedMap;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentHashMap;
import java.util.function.BiFunction;
import java.util.function.Function;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.table.PairTable;

/**
 * The engines of an instance counted by several threads: {@code lanes} {@link EngineWorker}s, each the single
 * writer of its own partitions. Counting is the bottleneck of the ingest path, and partitions are independent
 * streams, so with more cores more lanes count more baskets at once.
 *
 * <h2>Which lane</h2>
 * Partition number {@code p} is counted by lane {@code p mod lanes}: deterministic, so a restart or a rebalance puts
 * a partition in the same lane, and the spread is even when the instance owns consecutive partitions.
 * Per-partition operations ({@link #apply}, {@link #restore}, {@link #read}) go to the partition's lane; the others
 * go to every lane concerned and their results are combined.
 *
 * <h2>Order</h2>
 * All commands of one partition run on one lane in submission order, so a snapshot sees exactly the baskets submitted
 * before it, as with one worker. Lanes run independently, but an operation on several lanes enqueues its command on
 * each of them before it returns: a merged result holds exactly the baskets the caller submitted before the call.
 *
 * <h2>Merged results</h2>
 * Each lane merges its own partitions on its own thread (in parallel), in partition order; the lane results are then
 * merged in lane order into one new engine ({@link PairEngine#merge}) by the lane that finishes last ({@link LaneJoin}).
 * Sketches and window counts add exactly, so they equal the merge in partition order; decayed sums may differ in
 * the last bits (another order of float additions). A refresh builds its tables from these merges with the code of
 * {@link EngineWorker#refresh} ({@link EngineMerges#tables}). With one lane every operation is the single worker's.
 * Memory: while the lane results are merged, a refresh holds one merged copy per lane that holds partitions (lanes
 * without partitions deliver none), besides the result: up to {@code lanes} more copies than with one lane.
 *
 * <h2>Threading</h2>
 * Without threads of their own ({@code ownThreads = false}) there is one lane, run inline on the caller's thread.
 * Each lane has its own queue of {@code queueCapacity} commands (backpressure per lane). A lane's failure stops
 * the ingest like a worker's: {@link #failure()} is the first lane's failure, in lane order.
 */
public final class EngineLanes implements AutoCloseable {
  private final EngineConfig config;
  private final SegmentSettings segmentSettings;
  private final List<EngineWorker> lanes;

  /**
   * @param lanes the number of engine threads, at least 1; ignored (one lane, inline) without {@code ownThreads}
   */
  public EngineLanes(EngineConfig config, SegmentSettings segments, IngestMetrics metrics, boolean ownThreads,
      int lanes, int queueCapacity) {
    if (lanes < 1) {
      throw new IllegalArgumentException("at least one engine lane is needed: " + lanes);
    }
    this.config = Objects.requireNonNull(config, "config");
    this.segmentSettings = Objects.requireNonNull(segments, "segments");
    int count = ownThreads ? lanes : 1;
    Set<String> skipsLogged = ConcurrentHashMap.newKeySet();
    List<EngineWorker> workers = new ArrayList<>(count);
    for (int lane = 0; lane < count; lane++) {
      workers.add(new EngineWorker(config, segments, metrics, ownThreads, queueCapacity, lane, count, skipsLogged));
    }
    this.lanes = List.copyOf(workers);
  }

  public EngineConfig config() {
    return config;
  }

  public SegmentSettings segmentSettings() {
    return segmentSettings;
  }

  /** The lane that counts {@code partition}. */
  int laneOf(TopicPartition partition) {
    return partition.partition() % lanes.size();
  }

  private EngineWorker lane(TopicPartition partition) {
    return lanes.get(laneOf(partition));
  }

  /** Counts a batch of baskets of {@code partition} on its lane; blocks while that lane's queue is full. */
  public void apply(TopicPartition partition, BasketBatch batch) throws InterruptedException {
    lane(partition).apply(partition, batch);
  }

  /** Snapshots of the given partitions' engines, each lane taking its own (see {@link EngineWorker#snapshot}). */
  public CompletableFuture<Map<TopicPartition, EngineWorker.PartitionSnapshot>> snapshot(
      Collection<TopicPartition> partitions) {
    List<CompletableFuture<Map<TopicPartition, EngineWorker.PartitionSnapshot>>> parts = perLane(partitions,
        EngineWorker::snapshot);
    return CompletableFuture.allOf(parts.toArray(new CompletableFuture<?>[0])).thenApply(done -> {
      Map<TopicPartition, EngineWorker.PartitionSnapshot> union = new HashMap<>();
      parts.forEach(part -> union.putAll(part.join()));
      return union;
    });
  }

  /** Replaces a partition's engine with a restored one (see {@link EngineWorker#restore(TopicPartition, PairEngine)}). */
  public CompletableFuture<Void> restore(TopicPartition partition, PairEngine engine) {
    return lane(partition).restore(partition, engine);
  }

  /**
   * Replaces a partition's engines with restored ones (see {@link EngineWorker#restore(TopicPartition, PairEngine, Map)}).
   *
   * @throws IllegalArgumentException when an engine was written with another configuration
   */
  public CompletableFuture<Void> restore(TopicPartition partition, PairEngine engine, Map<String, PairEngine> segments) {
    return lane(partition).restore(partition, engine, segments);
  }

  /** Forgets partitions, each on its lane. */
  public CompletableFuture<Void> drop(Collection<TopicPartition> partitions) {
    return CompletableFuture.allOf(perLane(partitions, EngineWorker::drop).toArray(new CompletableFuture<?>[0]));
  }

  /** A new engine holding the merge of every partition's {@value SegmentSettings#ALL} engine (the instance's view). */
  public CompletableFuture<PairEngine> mergedCopy() {
    if (lanes.size() == 1) {
      return lanes.get(0).mergedCopy();
    }
    return LaneJoin.run(lanes, lane -> lane.emptyNow() ? null : lane.mergeNow(),
        parts -> EngineMerges.merge(config, held(parts)));
  }

  /** New engines holding the merge of every partition's segment engines, per segment in name order. */
  public CompletableFuture<SortedMap<String, PairEngine>> mergedSegmentCopies() {
    if (lanes.size() == 1) {
      return lanes.get(0).mergedSegmentCopies();
    }
    return LaneJoin.run(lanes, EngineWorker::mergeSegmentsNow,
        parts -> EngineMerges.mergeSegments(segmentSettings.segmentEngine(config), parts));
  }

  /** The pair tables of the merged state, as {@link EngineWorker#refresh} builds them for its partitions. */
  public CompletableFuture<Map<String, PairTable>> refresh(long version, long publishedAtMillis) {
    if (lanes.size() == 1) {
      return lanes.get(0).refresh(version, publishedAtMillis);
    }
    return LaneJoin.run(lanes, lane -> lane.emptyNow() ? null : lane.mergedNow(), parts -> {
      List<EngineMerges.Merged> held = held(parts);
      PairEngine all = EngineMerges.merge(config, held.stream().map(EngineMerges.Merged::all).toList());
      SortedMap<String, PairEngine> segments = EngineMerges.mergeSegments(segmentSettings.segmentEngine(config),
          held.stream().map(EngineMerges.Merged::segments).toList());
      return EngineMerges.tables(new EngineMerges.Merged(all, segments), version, publishedAtMillis);
    });
  }

  /**
   * The pair tables of the group view: every partition counted here and the {@code remote} ones, merged in partition
   * order (see {@link EngineWorker#refresh(long, long, SortedMap)}). With several lanes, each lane hands copies of
   * its partitions' engines to the last lane, which merges them all in partition order: the refresh then holds one
   * more copy of this instance's state.
   */
  public CompletableFuture<Map<String, PairTable>> refresh(long version, long publishedAtMillis,
      SortedMap<TopicPartition, PartitionEngines> remote) {
    if (lanes.size() == 1) {
      return lanes.get(0).refresh(version, publishedAtMillis, remote);
    }
    return LaneJoin.run(lanes, lane -> lane.withOwn(new java.util.TreeMap<>(EngineWorker.PARTITION_ORDER), true),
        parts -> {
          SortedMap<TopicPartition, PartitionEngines> all = new java.util.TreeMap<>(EngineWorker.PARTITION_ORDER);
          all.putAll(remote);
          parts.forEach(all::putAll);
          return EngineMerges.tables(EngineMerges.mergeInOrder(config, segmentSettings.segmentEngine(config),
              all.values()), version, publishedAtMillis);
        });
  }

  /** Runs {@code reader} on a copy of one partition's engine, on its lane (null if the partition has none). */
  public <T> CompletableFuture<T> read(TopicPartition partition, Function<PairEngine, T> reader) {
    return lane(partition).read(partition, reader);
  }

  /** Waits until every command submitted so far to any lane has run. */
  public void drain() {
    lanes.forEach(EngineWorker::drain);
  }

  /** The exception that stopped the first failed lane (in lane order), or null. */
  public Throwable failure() {
    for (EngineWorker lane : lanes) {
      if (lane.failure() != null) {
        return lane.failure();
      }
    }
    return null;
  }

  /** Runs what was submitted to every lane, then stops the lanes' threads. */
  @Override
  public void close() {
    lanes.forEach(EngineWorker::close);
  }

  /**
   * The parts of the lanes that hold partitions (the others deliver null): a lane without partitions would merge
   * nothing into a new full-size engine, which is memory for nothing while the refresh holds every lane's merge.
   */
  private static <T> List<T> held(List<T> parts) {
    return parts.stream().filter(Objects::nonNull).toList();
  }

  /** {@code operation} on each lane that holds some of {@code partitions}, with those partitions. */
  private <T> List<CompletableFuture<T>> perLane(Collection<TopicPartition> partitions,
      BiFunction<EngineWorker, List<TopicPartition>, CompletableFuture<T>> operation) {
    List<List<TopicPartition>> byLane = new ArrayList<>();
    lanes.forEach(lane -> byLane.add(new ArrayList<>()));
    partitions.forEach(tp -> byLane.get(laneOf(tp)).add(tp));
    List<CompletableFuture<T>> parts = new ArrayList<>();
    for (int i = 0; i < lanes.size(); i++) {
      if (!byLane.get(i).isEmpty()) {
        parts.add(operation.apply(lanes.get(i), byLane.get(i)));
      }
    }
    return parts;
  }
}
