package org.pairpulse.ingest.kafka;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SortedMap;
import java.util.TreeMap;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.function.LongSupplier;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.ListOffsetsOptions;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.common.IsolationLevel;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.worker.EngineWorker;
import org.pairpulse.ingest.worker.PartitionEngines;
import org.pairpulse.sketch.engine.EngineConfig;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The group view: the newest committed checkpoint of every input partition, read from the state topic as the
 * group's instances write it, so that an instance can serve the merge of <em>all</em> partitions (its own, counted
 * live, and the others from their owners' checkpoints).
 *
 * <h2>What travels</h2>
 * Nothing new is written: the checkpoints that group mode writes anyway ({@link StateTopicStore}, one transaction
 * with the offsets every {@code checkpoint.interval.ms}) are the publication. A smaller serving snapshot (tracked
 * tables and counts without the sketches) would not merge to the same table: the mergeable-summary rule for the
 * tracked tables (Agarwal, Cormode, Huang, Phillips, Wei, Yi, "Mergeable summaries", PODS 2012; see
 * {@code EngineMerge}) charges a key tracked on one side with the other side's count-min estimate, and a pair's
 * counts before its admission are read from the sketches. So the checkpoint's engine snapshot is what a remote
 * partition must contribute; what is saved is reading it again: the instance's one consumer reads the state topic
 * beside its basket partitions ({@link StateTap}: each checkpoint is read once, when it is committed), and the view
 * decodes a partition only when it has a new checkpoint and is not counted here.
 *
 * <h2>Coverage</h2>
 * {@link #coverage} says, per refresh, which partitions the served table holds: live (counted here), remote (merged
 * from a checkpoint), empty (no record and no checkpoint), missing (records but no checkpoint readable here), and
 * stale (a contribution that does not reach the records its partition held {@code staleAfterMillis} ago: a remote
 * checkpoint not renewed, or an owned partition still catching up after a restore).
 *
 * <h2>Threading</h2>
 * No thread of its own reads: the tap tells the view of each new checkpoint on the poll thread, and the poll loop's
 * {@link #tick} asks the admin client for the log end offsets (answered on the admin client's thread). A new remote
 * checkpoint is decoded on the view's decoder thread (off the poll thread). {@link #remote} and {@link #coverage} may
 * be called from any thread; a decoded engine is never changed afterwards.
 */
public final class GroupView implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(GroupView.class);
  private static final long LOG_END_EVERY_MILLIS = 1000;

  private final List<String> topics;
  private final EngineConfig engineConfig;
  private final long staleAfterMillis;
  private final StateTap tap;
  private final Admin admin;
  private final LongSupplier wallClock;
  private final java.util.function.Supplier<Set<TopicPartition>> owned;
  private final ExecutorService decoder = Executors.newSingleThreadExecutor(r -> {
    Thread t = new Thread(r, "pairpulse-group-view-decoder");
    t.setDaemon(true);
    return t;
  });
  private final Map<TopicPartition, Long> logEnds = new ConcurrentHashMap<>();
  private volatile long publicationBytes;
  private volatile long publicationsRead;
  private long lastLogEndsMillis; // poll thread only
  private volatile boolean logEndsAsked;

  /**
   * @param tap the instance's reader of the state topic, which tells the view of every checkpoint it reads
   * @param admin an admin client (not closed by the view)
   * @param staleAfterMillis how long a remote partition's checkpoint may lag its records before it counts as stale
   * @param owned the partitions counted here now: a new checkpoint of another partition is decoded at once, on the
   *     decoder thread (an owned one only if it stops being owned)
   */
  GroupView(List<String> topics, EngineConfig engineConfig, long staleAfterMillis, StateTap tap, Admin admin,
      LongSupplier wallClock, java.util.function.Supplier<Set<TopicPartition>> owned) {
    this.topics = List.copyOf(topics);
    this.engineConfig = engineConfig;
    this.staleAfterMillis = staleAfterMillis;
    this.tap = tap;
    this.admin = admin;
    this.wallClock = wallClock;
    this.owned = owned;
    tap.onPublished(this::published);
  }

  /** A new checkpoint read by the tap (poll thread). */
  private void published(TopicPartition tp, NewestCheckpoint entry) {
    publicationBytes += entry.checkpoint().encodedBytes();
    publicationsRead++;
    if (!owned.get().contains(tp)) {
      decoder.execute(() -> {
        try {
          entry.decoded(); // here rather than on the refresh's thread
        } catch (RuntimeException e) {
          LOG.warn("checkpoint {} of {} on the state topic cannot be decoded ({}); skipped", entry.checkpoint()
              .checkpointId(), tp, e.toString());
        }
      });
    }
  }

  /** Every second, asks for the input partitions' log end offsets (poll thread; answered on the admin's thread). */
  void tick() {
    long now = wallClock.getAsLong();
    List<TopicPartition> inputs = tap.inputs();
    if (now - lastLogEndsMillis < LOG_END_EVERY_MILLIS || logEndsAsked || inputs.isEmpty()) {
      return;
    }
    lastLogEndsMillis = now;
    logEndsAsked = true;
    Map<TopicPartition, OffsetSpec> request = new HashMap<>();
    inputs.forEach(tp -> request.put(tp, OffsetSpec.latest()));
    admin.listOffsets(request, new ListOffsetsOptions(IsolationLevel.READ_COMMITTED)).all().whenComplete((ends, error) -> {
      logEndsAsked = false;
      if (error != null) {
        LOG.debug("log end offsets not read now: {}", error.toString());
        return;
      }
      ends.forEach((tp, info) -> {
        logEnds.put(tp, info.offset());
        remember(tp, wallClock.getAsLong(), info.offset());
      });
    });
  }

  /** Log end readings per partition, oldest first: [wall-clock ms, offset]; one at least the staleness bound old. */
  private final Map<TopicPartition, java.util.Deque<long[]>> endHistory = new ConcurrentHashMap<>();

  private void remember(TopicPartition tp, long atMillis, long offset) {
    java.util.Deque<long[]> history = endHistory.computeIfAbsent(tp, k -> new java.util.concurrent.ConcurrentLinkedDeque<>());
    history.addLast(new long[] {atMillis, offset});
    // the oldest reading is not needed once the next one is at least the staleness bound old
    while (history.size() > 1 && secondOf(history)[0] <= atMillis - staleAfterMillis) {
      history.pollFirst();
    }
  }

  private static long[] secondOf(java.util.Deque<long[]> history) {
    java.util.Iterator<long[]> it = history.iterator();
    it.next();
    return it.hasNext() ? it.next() : null;
  }

  /**
   * The log end offset that {@code tp} had {@code staleAfterMillis} ago (the newest reading at least that old; the
   * oldest reading while none is that old), or −1 when none was read.
   */
  private long requiredOffset(TopicPartition tp, long nowMillis) {
    java.util.Deque<long[]> history = endHistory.get(tp);
    if (history == null || history.isEmpty()) {
      return -1;
    }
    long[] chosen = history.peekFirst();
    for (long[] reading : history) {
      if (reading[0] <= nowMillis - staleAfterMillis) {
        chosen = reading;
      }
    }
    return chosen[1];
  }

  /**
   * The engines of every partition that has a checkpoint and is not in {@code owned}, in partition order (decoding
   * those not decoded yet).
   */
  public SortedMap<TopicPartition, PartitionEngines> remote(Set<TopicPartition> owned) {
    SortedMap<TopicPartition, PartitionEngines> out = new TreeMap<>(EngineWorker.PARTITION_ORDER);
    tap.newest().forEach((tp, entry) -> {
      if (!owned.contains(tp) && topics.contains(tp.topic())) { // not a partition of a topic read before, not now
        PartitionEngines engines;
        try {
          engines = entry.decoded();
        } catch (RuntimeException e) {
          return; // told when it was read
        }
        if (engines.all().config().equals(engineConfig)) {
          out.put(tp, engines);
        } else {
          LOG.warn("checkpoint of {} was written with another engine configuration; not merged", tp);
        }
      }
    });
    return out;
  }

  /**
   * Which partitions a table merged from {@code owned} and {@link #remote}{@code (owned)} holds, at {@code nowMillis}.
   * A contribution is stale when it does not reach the records its partition held {@code staleAfterMillis} ago: a
   * remote checkpoint its owner has not renewed, or an owned partition still catching up (restored from an older
   * checkpoint after a rebalance or a restart).
   *
   * @param positions the next offset this instance reads in each owned partition
   */
  public GroupCoverage coverage(Set<TopicPartition> owned, Map<TopicPartition, Long> positions, long nowMillis) {
    int live = 0;
    int remote = 0;
    int empty = 0;
    long oldest = 0;
    List<TopicPartition> missing = new ArrayList<>();
    List<TopicPartition> stale = new ArrayList<>();
    Set<TopicPartition> all = new java.util.TreeSet<>(EngineWorker.PARTITION_ORDER);
    all.addAll(tap.inputs());
    all.addAll(logEnds.keySet());
    all.addAll(owned);
    for (TopicPartition tp : all) {
      long end = logEnds.getOrDefault(tp, -1L);
      long required = requiredOffset(tp, nowMillis);
      NewestCheckpoint newest = tap.newest().get(tp);
      org.pairpulse.ingest.checkpoint.PartitionCheckpoint entry = newest == null ? null : newest.checkpoint();
      if (owned.contains(tp)) {
        live++;
        if (positions.getOrDefault(tp, -1L) < required) {
          stale.add(tp);
        }
      } else if (entry != null) {
        remote++;
        if (end > entry.nextOffset()) {
          oldest = Math.max(oldest, Math.max(0, nowMillis - entry.createdAtMillis()));
        }
        if (entry.nextOffset() < required) {
          stale.add(tp);
        }
      } else if (end == 0) {
        empty++;
      } else {
        missing.add(tp);
      }
    }
    return new GroupCoverage(all.size(), live, remote, empty, missing, stale, oldest, publicationBytes, publicationsRead);
  }

  @Override
  public void close() {
    decoder.shutdownNow();
    try {
      decoder.awaitTermination(10, TimeUnit.SECONDS);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }
}
