package org.pairpulse.ingest.kafka;

import java.io.ByteArrayInputStream;
import java.io.DataInputStream;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SortedMap;
import java.util.TreeMap;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.function.LongSupplier;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.ListOffsetsOptions;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.IsolationLevel;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.WakeupException;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.worker.EngineWorker;
import org.pairpulse.ingest.worker.PartitionEngines;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
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
 * partition must contribute; what is saved is reading it again: the view tails the state topic (each checkpoint is
 * read once, when it is committed, from where the group's committed offsets point at start), and decodes a
 * partition only when it has a new checkpoint and is not counted here.
 *
 * <h2>Coverage</h2>
 * {@link #coverage} says, per refresh, which partitions the served table holds: live (counted here), remote (merged
 * from a checkpoint), empty (no record and no checkpoint), missing (records but no checkpoint readable here), and
 * stale (a contribution that does not reach the records its partition held {@code staleAfterMillis} ago: a remote
 * checkpoint not renewed, or an owned partition still catching up after a restore).
 *
 * <h2>Threading</h2>
 * One thread of its own reads the state topic, taking turns on the instance's one state-topic reader with the
 * checkpoint restores ({@link SharedStateReader}: after a restore's turn it puts back its own assignment and
 * positions), and asks the admin client for log end offsets every second.
 * {@link #remote} and {@link #coverage} may be called from any thread; a decoded engine is never changed afterwards.
 */
public final class GroupView implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(GroupView.class);
  private static final long LOG_END_EVERY_MILLIS = 1000;

  private final String stateTopic;
  private final String group;
  private final List<String> topics;
  private final EngineConfig engineConfig;
  private final long staleAfterMillis;
  private final SharedStateReader.Lease reader;
  /** Where this view's reading of each state partition stands after its last turn (view thread only). */
  private final Map<TopicPartition, Long> statePositions = new HashMap<>();
  private final Admin admin;
  private final LongSupplier wallClock;
  private final java.util.function.Supplier<Set<TopicPartition>> owned;
  private final Thread thread;
  private final Map<TopicPartition, Latest> latest = new ConcurrentHashMap<>();
  private final Map<TopicPartition, Long> logEnds = new ConcurrentHashMap<>();
  private volatile boolean running = true;
  private volatile long publicationBytes;
  private volatile long publicationsRead;

  /** The newest complete checkpoint of one partition; decoded on first need (never changed afterwards). */
  private static final class Latest {
    final PartitionCheckpoint checkpoint;
    private PartitionEngines decoded;

    Latest(PartitionCheckpoint checkpoint) {
      this.checkpoint = checkpoint;
    }

    synchronized PartitionEngines decoded() {
      if (decoded == null) {
        SortedMap<String, PairEngine> segments = new TreeMap<>();
        checkpoint.segments().forEach((name, bytes) -> segments.put(name, Snapshots.read(bytes)));
        decoded = new PartitionEngines(Snapshots.read(checkpoint.engine()), segments);
      }
      return decoded;
    }
  }

  /**
   * Starts reading.
   *
   * @param reader the view's lease on the instance's state-topic reader (not closed by the view)
   * @param admin an admin client (not closed by the view)
   * @param staleAfterMillis how long a remote partition's checkpoint may lag its records before it counts as stale
   * @param owned the partitions counted here now: a new checkpoint of another partition is decoded at once, on this
   *     view's thread (an owned one only if it stops being owned)
   */
  GroupView(String stateTopic, String group, List<String> topics, EngineConfig engineConfig, long staleAfterMillis,
      SharedStateReader.Lease reader, Admin admin, LongSupplier wallClock,
      java.util.function.Supplier<Set<TopicPartition>> owned) {
    this.stateTopic = stateTopic;
    this.group = group;
    this.topics = List.copyOf(topics);
    this.engineConfig = engineConfig;
    this.staleAfterMillis = staleAfterMillis;
    this.reader = reader;
    this.admin = admin;
    this.wallClock = wallClock;
    this.owned = owned;
    this.thread = new Thread(this::run, "pairpulse-group-view");
    this.thread.setDaemon(true);
  }

  GroupView start() {
    thread.start();
    return this;
  }

  private void run() {
    try {
      Map<TopicPartition, Long> starts = startOffsets();
      reader.use((consumer, lent) -> {
        assign(consumer, starts);
        savePositions(consumer);
        return null;
      });
      long lastLogEnds = 0;
      while (running) {
        reader.use((consumer, lent) -> {
          if (lent) {
            putBackPositions(consumer);
          }
          for (ConsumerRecord<byte[], byte[]> r : consumer.poll(Duration.ofMillis(200))) {
            accept(r);
          }
          savePositions(consumer);
          return null;
        });
        long now = wallClock.getAsLong();
        if (now - lastLogEnds >= LOG_END_EVERY_MILLIS) {
          lastLogEnds = now;
          readLogEnds();
        }
      }
    } catch (WakeupException e) {
      // closing
    } catch (RuntimeException e) {
      if (running) {
        LOG.error("the group view stopped reading the state topic {}; remote partitions will show as stale", stateTopic, e);
      }
    }
  }

  private void savePositions(Consumer<byte[], byte[]> consumer) {
    for (TopicPartition source : consumer.assignment()) {
      statePositions.put(source, consumer.position(source));
    }
  }

  /** A restore used the reader since this view's last turn: assign the state partitions again where they stood. */
  private void putBackPositions(Consumer<byte[], byte[]> consumer) {
    consumer.assign(statePositions.keySet());
    statePositions.forEach(consumer::seek);
  }

  /**
   * Where the view starts reading each state partition: the oldest checkpoint the group's committed offsets point at
   * there, or −1 for its beginning (asked of the admin client, outside the reader's turns).
   */
  private Map<TopicPartition, Long> startOffsets() {
    try {
      int statePartitions = admin.describeTopics(List.of(stateTopic)).allTopicNames().get(60, TimeUnit.SECONDS)
          .get(stateTopic).partitions().size();
      java.util.Collection<TopicDescription> described = admin.describeTopics(topics).allTopicNames()
          .get(60, TimeUnit.SECONDS).values();
      List<TopicPartition> inputs = new ArrayList<>();
      described.forEach(topic -> topic.partitions().forEach(p -> inputs.add(new TopicPartition(topic.name(),
          p.partition()))));
      Map<TopicPartition, OffsetAndMetadata> committed = StableOffsets.committed(admin, group, inputs);
      Map<Integer, Long> from = new HashMap<>();
      boolean[] unknown = new boolean[statePartitions];
      for (TopicPartition tp : inputs) {
        logEnds.putIfAbsent(tp, -1L);
        OffsetAndMetadata c = committed.get(tp);
        int sp = tp.partition() % statePartitions;
        String[] parts = c == null || c.metadata() == null ? new String[0] : c.metadata().split(" ");
        if (parts.length == 5 && parts[0].equals(StateTopicStore.METADATA_PREFIX)) {
          from.merge(Integer.parseInt(parts[1]), Long.parseLong(parts[2]), Math::min);
        } else {
          unknown[sp] = true;
        }
      }
      Map<TopicPartition, Long> starts = new HashMap<>();
      for (int sp = 0; sp < statePartitions; sp++) {
        starts.put(new TopicPartition(stateTopic, sp), unknown[sp] || !from.containsKey(sp) ? -1L : from.get(sp));
      }
      return starts;
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted while starting the group view", e);
    } catch (java.util.concurrent.ExecutionException | java.util.concurrent.TimeoutException e) {
      throw new IllegalStateException("cannot start the group view on " + stateTopic + ": " + e.getMessage(), e);
    }
  }

  /** Assigns every state partition of {@code starts}, each from its start (−1: its beginning). */
  private static void assign(Consumer<byte[], byte[]> reader, Map<TopicPartition, Long> starts) {
    reader.assign(starts.keySet());
    starts.forEach((source, from) -> {
      if (from < 0) {
        reader.seekToBeginning(List.of(source));
      } else {
        reader.seek(source, from);
      }
    });
  }

  /** Chunks being put together per input partition (reader thread only). */
  private final Map<TopicPartition, Chunks> assembling = new HashMap<>();

  private record Chunks(long id, byte[][] parts, long totalBytes) {
    boolean complete() {
      for (byte[] part : parts) {
        if (part == null) {
          return false;
        }
      }
      return true;
    }
  }

  private void accept(ConsumerRecord<byte[], byte[]> r) {
    if (r.value() == null || r.key() == null || r.value().length < StateTopicStore.CHUNK_HEADER_BYTES) {
      return;
    }
    TopicPartition tp;
    int index;
    try (DataInputStream key = new DataInputStream(new ByteArrayInputStream(r.key()))) {
      if (!key.readUTF().equals(group)) {
        return;
      }
      String topic = key.readUTF();
      int partition = key.readInt();
      index = key.readInt();
      if (key.available() != 0 || topic.isEmpty()) {
        return;
      }
      tp = new TopicPartition(topic, partition);
    } catch (IOException e) {
      return; // another key layout (the alert state record): not a checkpoint chunk
    }
    ByteBuffer v = ByteBuffer.wrap(r.value());
    if (v.getInt(0) != StateTopicStore.MAGIC || v.get(4) != StateTopicStore.FORMAT_VERSION) {
      return;
    }
    long id = v.getLong(8);
    int count = v.getInt(20);
    long total = v.getLong(24);
    if (index < 0 || index >= count) {
      return;
    }
    Chunks chunks = assembling.get(tp);
    if (chunks == null || chunks.id() != id || chunks.parts().length != count) {
      chunks = new Chunks(id, new byte[count][], total);
      assembling.put(tp, chunks);
    }
    byte[] data = new byte[r.value().length - StateTopicStore.CHUNK_HEADER_BYTES];
    v.get(StateTopicStore.CHUNK_HEADER_BYTES, data);
    chunks.parts()[index] = data;
    if (!chunks.complete()) {
      return;
    }
    assembling.remove(tp);
    ByteBuffer whole = ByteBuffer.allocate((int) chunks.totalBytes());
    for (byte[] part : chunks.parts()) {
      if (part.length > whole.remaining()) {
        LOG.warn("checkpoint {} of {} on the state topic is larger than it says; skipped", id, tp);
        return;
      }
      whole.put(part);
    }
    PartitionCheckpoint checkpoint;
    try {
      checkpoint = PartitionCheckpoint.decode(whole.array());
    } catch (RuntimeException e) {
      LOG.warn("checkpoint {} of {} on the state topic is unreadable ({}); skipped", id, tp, e.toString());
      return;
    }
    Latest entry = new Latest(checkpoint);
    if (!owned.get().contains(tp)) {
      try {
        entry.decoded(); // here rather than on the refresh's thread
      } catch (RuntimeException e) {
        LOG.warn("checkpoint {} of {} on the state topic cannot be decoded ({}); skipped", id, tp, e.toString());
        return;
      }
    }
    latest.put(tp, entry);
    publicationBytes += chunks.totalBytes();
    publicationsRead++;
  }

  private void readLogEnds() {
    if (logEnds.isEmpty()) {
      return;
    }
    Map<TopicPartition, OffsetSpec> request = new HashMap<>();
    logEnds.keySet().forEach(tp -> request.put(tp, OffsetSpec.latest()));
    try {
      admin.listOffsets(request, new ListOffsetsOptions(IsolationLevel.READ_COMMITTED)).all().get(10, TimeUnit.SECONDS)
          .forEach((tp, info) -> {
            logEnds.put(tp, info.offset());
            remember(tp, wallClock.getAsLong(), info.offset());
          });
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    } catch (java.util.concurrent.ExecutionException | java.util.concurrent.TimeoutException e) {
      LOG.debug("log end offsets not read now: {}", e.toString());
    }
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
    latest.forEach((tp, entry) -> {
      if (!owned.contains(tp) && topics.contains(tp.topic())) { // not a partition of a topic read before, not now
        PartitionEngines engines = entry.decoded();
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
    all.addAll(logEnds.keySet());
    all.addAll(owned);
    for (TopicPartition tp : all) {
      long end = logEnds.getOrDefault(tp, -1L);
      long required = requiredOffset(tp, nowMillis);
      Latest entry = latest.get(tp);
      if (owned.contains(tp)) {
        live++;
        if (positions.getOrDefault(tp, -1L) < required) {
          stale.add(tp);
        }
      } else if (entry != null) {
        remote++;
        if (end > entry.checkpoint.nextOffset()) {
          oldest = Math.max(oldest, Math.max(0, nowMillis - entry.checkpoint.createdAtMillis()));
        }
        if (entry.checkpoint.nextOffset() < required) {
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
    running = false; // the view's turn polls at most 200 ms; a wakeup could end a restore's turn instead
    try {
      thread.join(TimeUnit.SECONDS.toMillis(10));
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }
}
