package org.pairpulse.ingest.kafka;

import java.io.ByteArrayInputStream;
import java.io.DataInputStream;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.function.BiConsumer;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The group's compacted state as the instance's one consumer reads it (group mode): every partition of the state
 * topic (and of the keys it follows, {@link CommittedKey}) is assigned to every member ({@link SharedTopicsAssignor})
 * and polled beside the basket partitions, {@code read_committed}. The poll loop hands this tap the state records;
 * it puts each partition's checkpoint chunks back together and keeps the newest committed checkpoint of every input
 * partition of the group, which serves the checkpoint restores ({@link #lookup}) and the group view
 * ({@link GroupView}).
 *
 * <h2>Where it reads from</h2>
 * When the state partitions are first assigned, each is sought to the oldest checkpoint that the group's committed
 * offsets point at there (their metadata, see {@link StateTopicStore}), or to its beginning when some input partition
 * has no such pointer; from there on, the tap reads every checkpoint once, as it is committed.
 *
 * <h2>Restores without blocking</h2>
 * A restore does not read the state topic itself: its partition is paused while the poll loop goes on, until the tap
 * has read the checkpoint that the committed offset's metadata names (or, without metadata, has read the state
 * partition up to its {@code read_committed} end offset as of the restore). A checkpoint hidden behind a dead
 * instance's open transaction is waited for, up to the restore timeout, as {@link StateTopicStore} describes; once
 * the tap has read to the log end without finding it, the newest one read is taken at once.
 *
 * <p>Threading: the poll thread, except {@link #newest()} and {@link #inputs()}, which any thread may read.
 */
final class StateTap {
  private static final Logger LOG = LoggerFactory.getLogger(StateTap.class);
  /** How often a waiting restore asks again for its state partition's end offsets. */
  private static final long RECHECK_NANOS = 1_000_000_000L;
  /** How long a state partition's asked end offset serves other restores. */
  private static final long END_REUSE_NANOS = 200_000_000L;

  private final String stateTopic;
  private final String group;
  private final int statePartitions;
  private final List<String> basketTopics;
  private final Duration restoreTimeout;
  private final java.util.function.ToLongFunction<TopicPartition> logEnd;
  private final Map<String, CommittedKey> followed = new LinkedHashMap<>();
  /** Chunks being put together, per input partition. */
  private final Map<TopicPartition, Chunks> assembling = new HashMap<>();
  private final Map<TopicPartition, NewestCheckpoint> newest = new ConcurrentHashMap<>();
  /** Where the tap stood in each shared partition when it was last revoked (sought back on a new assignment). */
  private final Map<TopicPartition, Long> leftAt = new HashMap<>();
  /** The newest end offset asked per state partition: [offset, System.nanoTime() when asked]. */
  private final Map<TopicPartition, long[]> stableEnds = new HashMap<>();
  private volatile List<TopicPartition> inputs = List.of();
  private BiConsumer<TopicPartition, NewestCheckpoint> published = (tp, cp) -> { };
  private Consumer<byte[], byte[]> consumer;

  /**
   * @param restoreTimeout the longest wait of a restore for its checkpoint (see above)
   * @param logEnd the log end offset ({@code read_uncommitted}) of a state partition, or −1 when it cannot be told
   */
  StateTap(String stateTopic, String group, int statePartitions, List<String> basketTopics, Duration restoreTimeout,
      java.util.function.ToLongFunction<TopicPartition> logEnd) {
    this.stateTopic = stateTopic;
    this.group = group;
    this.statePartitions = statePartitions;
    this.basketTopics = List.copyOf(basketTopics);
    this.restoreTimeout = restoreTimeout;
    this.logEnd = logEnd;
  }

  /** Follows {@code key}'s compacted topic too (before the consumer subscribes). */
  void follow(CommittedKey key) {
    String topic = key.topic();
    if (topic.equals(stateTopic) || basketTopics.contains(topic) || followed.containsKey(topic)) {
      throw new IllegalArgumentException("topic " + topic + " is read already");
    }
    followed.put(topic, key);
  }

  /** The topics whose every partition every member reads: the state topic and the followed ones. */
  List<String> sharedTopics() {
    List<String> topics = new ArrayList<>();
    topics.add(stateTopic);
    topics.addAll(followed.keySet());
    return topics;
  }

  boolean reads(String topic) {
    return topic.equals(stateTopic) || followed.containsKey(topic);
  }

  /** Told of every checkpoint the tap puts together (poll thread; the group view). */
  void onPublished(BiConsumer<TopicPartition, NewestCheckpoint> listener) {
    this.published = listener;
  }

  /** The newest checkpoint read of every input partition (any thread). */
  Map<TopicPartition, NewestCheckpoint> newest() {
    return newest;
  }

  /** The input partitions of the group when the state partitions were first assigned (any thread). */
  List<TopicPartition> inputs() {
    return inputs;
  }

  /**
   * The consumer's rebalance listener: shared partitions are sought here, the rest go to {@code baskets} (shared ones
   * first on assignment, so a restore's lookup finds its state partition assigned).
   */
  ConsumerRebalanceListener around(Consumer<byte[], byte[]> consumer, ConsumerRebalanceListener baskets) {
    this.consumer = consumer;
    return new ConsumerRebalanceListener() {
      @Override
      public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        remember(partitions);
        baskets.onPartitionsRevoked(basketsOf(partitions));
      }

      @Override
      public void onPartitionsLost(Collection<TopicPartition> partitions) {
        remember(partitions);
        baskets.onPartitionsLost(basketsOf(partitions));
      }

      @Override
      public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
        seek(partitions.stream().filter(tp -> reads(tp.topic())).toList());
        baskets.onPartitionsAssigned(basketsOf(partitions));
      }
    };
  }

  private List<TopicPartition> basketsOf(Collection<TopicPartition> partitions) {
    return partitions.stream().filter(tp -> !reads(tp.topic())).toList();
  }

  private void remember(Collection<TopicPartition> partitions) {
    for (TopicPartition tp : partitions) {
      if (reads(tp.topic())) {
        long at = position(consumer, tp);
        if (at >= 0) {
          leftAt.put(tp, at);
        }
      }
    }
  }

  /** Seeks newly assigned shared partitions: back where the tap left them, else to where it must start. */
  private void seek(List<TopicPartition> shared) {
    if (shared.isEmpty()) {
      return;
    }
    Map<TopicPartition, Long> starts = null;
    for (TopicPartition tp : shared) {
      Long at = leftAt.remove(tp);
      if (at == null && tp.topic().equals(stateTopic)) {
        starts = starts == null ? startOffsets() : starts;
        at = starts.getOrDefault(tp, -1L);
      }
      if (at == null || at < 0) {
        consumer.seekToBeginning(List.of(tp));
      } else {
        consumer.seek(tp, at);
      }
    }
  }

  /**
   * Where each state partition is read from: the oldest checkpoint the group's committed offsets point at there, or
   * −1 (its beginning) when some input partition of it has no such pointer.
   */
  private Map<TopicPartition, Long> startOffsets() {
    List<TopicPartition> all = new ArrayList<>();
    for (String topic : basketTopics) {
      consumer.partitionsFor(topic).forEach(info -> all.add(new TopicPartition(topic, info.partition())));
    }
    inputs = List.copyOf(all);
    Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(new HashSet<>(all));
    Map<Integer, Long> from = new HashMap<>();
    Set<Integer> unknown = new HashSet<>();
    for (TopicPartition tp : all) {
      Pointer pointer = Pointer.of(committed.get(tp));
      if (pointer == null) {
        unknown.add(statePartitionOf(tp));
      } else {
        from.merge(pointer.statePartition(), pointer.firstOffset(), Math::min);
      }
    }
    Map<TopicPartition, Long> starts = new HashMap<>();
    from.forEach((sp, offset) -> starts.put(new TopicPartition(stateTopic, sp), unknown.contains(sp) ? -1L : offset));
    return starts;
  }

  private int statePartitionOf(TopicPartition tp) {
    return tp.partition() % statePartitions;
  }

  /** Records of one shared partition, in offset order (poll thread). */
  void accept(List<ConsumerRecord<byte[], byte[]>> records) {
    for (ConsumerRecord<byte[], byte[]> r : records) {
      CommittedKey key = followed.get(r.topic());
      if (key != null) {
        key.accept(r);
      } else {
        acceptChunk(r);
      }
    }
  }

  /** After every poll: answers the followed keys' reads that are due (poll thread). */
  void afterPoll() {
    followed.values().forEach(key -> key.afterPoll(consumer));
  }

  private void acceptChunk(ConsumerRecord<byte[], byte[]> r) {
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
      return; // another key layout: not a checkpoint chunk
    }
    ByteBuffer v = ByteBuffer.wrap(r.value());
    if (v.getInt(0) != StateTopicStore.MAGIC || v.get(4) != StateTopicStore.FORMAT_VERSION) {
      return;
    }
    long id = v.getLong(8);
    int count = v.getInt(20);
    if (index < 0 || index >= count) {
      return;
    }
    Chunks chunks = assembling.get(tp);
    if (chunks == null || chunks.id() != id || chunks.parts().length != count) {
      chunks = new Chunks(id, new byte[count][], v.getLong(24));
      assembling.put(tp, chunks);
    }
    byte[] data = new byte[r.value().length - StateTopicStore.CHUNK_HEADER_BYTES];
    v.get(StateTopicStore.CHUNK_HEADER_BYTES, data);
    chunks.parts()[index] = data;
    if (chunks.complete()) {
      assembling.remove(tp);
      completed(tp, chunks);
    }
  }

  private void completed(TopicPartition tp, Chunks chunks) {
    ByteBuffer whole = ByteBuffer.allocate((int) chunks.totalBytes());
    for (byte[] part : chunks.parts()) {
      if (part.length > whole.remaining()) {
        LOG.warn("checkpoint {} of {} on the state topic is larger than it says; skipped", chunks.id(), tp);
        return;
      }
      whole.put(part);
    }
    PartitionCheckpoint checkpoint;
    try {
      checkpoint = PartitionCheckpoint.decode(whole.array());
    } catch (RuntimeException e) {
      LOG.warn("checkpoint {} of {} on the state topic is unreadable ({}); skipped", chunks.id(), tp, e.toString());
      return;
    }
    NewestCheckpoint entry = new NewestCheckpoint(checkpoint);
    newest.put(tp, entry);
    published.accept(tp, entry);
  }

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

  /** Where a committed offset's metadata says its checkpoint is, or null (no usable metadata). */
  record Pointer(int statePartition, long firstOffset, long checkpointId) {
    static Pointer of(OffsetAndMetadata committed) {
      String[] parts = committed == null || committed.metadata() == null ? new String[0] : committed.metadata().split(" ");
      if (parts.length != 5 || !parts[0].equals(StateTopicStore.METADATA_PREFIX)) {
        return null;
      }
      try {
        return new Pointer(Integer.parseInt(parts[1]), Long.parseLong(parts[2]), Long.parseLong(parts[4]));
      } catch (NumberFormatException e) {
        return null;
      }
    }
  }

  /**
   * The newest checkpoint of {@code tp}, once the tap has read far enough (see the class comment); {@code found} is
   * told of it when it is found.
   */
  CheckpointStore.Lookup lookup(TopicPartition tp, OffsetAndMetadata committed,
      java.util.function.Consumer<PartitionCheckpoint> found) {
    return new Lookup(tp, committed, found);
  }

  /** One restore's wait for its checkpoint. */
  private final class Lookup implements CheckpointStore.Lookup {
    private final TopicPartition tp;
    private final TopicPartition source;
    private final OffsetAndMetadata committed;
    private final long wantedId;
    private final long askedNanos = System.nanoTime();
    private final java.util.function.Consumer<PartitionCheckpoint> onFound;
    private long target;
    private long nextCheckNanos;
    private boolean told;
    private Optional<PartitionCheckpoint> answer;

    Lookup(TopicPartition tp, OffsetAndMetadata committed, java.util.function.Consumer<PartitionCheckpoint> onFound) {
      this.tp = tp;
      this.committed = committed;
      this.onFound = onFound;
      Pointer pointer = Pointer.of(committed);
      this.wantedId = pointer == null ? -1 : pointer.checkpointId();
      this.source = new TopicPartition(stateTopic, pointer == null ? statePartitionOf(tp) : pointer.statePartition());
      this.target = endOffset();
      this.nextCheckNanos = askedNanos + RECHECK_NANOS;
    }

    @Override
    public boolean ready() {
      if (answer != null) {
        return true;
      }
      NewestCheckpoint read = newest.get(tp);
      Optional<PartitionCheckpoint> newestRead = Optional.ofNullable(read).map(NewestCheckpoint::checkpoint);
      // the very checkpoint the offsets were committed with (ids restart after a partition lost its state, so an
      // older lineage's higher id is no match)
      if (wantedId >= 0 && newestRead.isPresent() && newestRead.get().checkpointId() == wantedId) {
        return finish(newestRead);
      }
      long now = System.nanoTime();
      long position = position(consumer, source);
      if (target < 0 && now >= nextCheckNanos) {
        nextCheckNanos = now + RECHECK_NANOS;
        target = endOffset();
      }
      if (target >= 0 && position >= target) {
        if (wantedId < 0) {
          return finish(newestRead);
        }
        if (now >= nextCheckNanos) { // not readable yet: behind an open transaction, or not there at all
          nextCheckNanos = now + RECHECK_NANOS;
          target = endOffset();
          long end = logEnd.applyAsLong(source);
          if (end >= 0 && position >= end) {
            LOG.warn("checkpoint {} of {} not found where its commit metadata points ({}); taking the newest read", wantedId,
                tp, committed.metadata());
            return finish(newestRead);
          }
        }
      }
      if (now - askedNanos > restoreTimeout.toNanos()) {
        LOG.warn("checkpoint {} of {} still not readable on {} after {} s (read up to {}); taking the newest read", wantedId,
            tp, source, restoreTimeout.toSeconds(), position);
        return finish(newestRead);
      }
      if (!told && now - askedNanos > RECHECK_NANOS) {
        LOG.info("checkpoint {} of {} is not readable yet on {} (read up to {}, last stable offset {}): behind an open "
            + "transaction or still on its way; waiting up to {} s", wantedId, tp, source, position, target,
            restoreTimeout.toSeconds());
        told = true;
      }
      return false;
    }

    private boolean finish(Optional<PartitionCheckpoint> found) {
      answer = found;
      if (told) {
        LOG.info("checkpoint of {} became readable after {} ms", tp, (System.nanoTime() - askedNanos) / 1_000_000);
      }
      found.ifPresent(cp -> {
        if (committed != null && cp.nextOffset() != committed.offset()) {
          LOG.warn("checkpoint of {} covers up to offset {}, the group committed {}; resuming from the checkpoint", tp,
              cp.nextOffset(), committed.offset());
        }
        onFound.accept(cp);
      });
      return true;
    }

    @Override
    public Optional<PartitionCheckpoint> found() {
      return answer;
    }

    private long endOffset() {
      return stableEnd(source);
    }
  }

  /**
   * A state partition's {@code read_committed} end offset (its last stable offset), asked of the broker at most once
   * per 200 ms (the restores of one assignment share one answer); −1 when not told now.
   */
  private long stableEnd(TopicPartition source) {
    long now = System.nanoTime();
    long[] known = stableEnds.get(source);
    if (known != null && now - known[1] < END_REUSE_NANOS) {
      return known[0];
    }
    try {
      long end = consumer.endOffsets(List.of(source), Duration.ofSeconds(10)).getOrDefault(source, -1L);
      stableEnds.put(source, new long[] {end, now});
      return end;
    } catch (KafkaException e) {
      return -1;
    }
  }

  /** The consumer's position in {@code tp}, or −1 when it has none now (not assigned, not yet sought). */
  static long position(Consumer<byte[], byte[]> consumer, TopicPartition tp) {
    try {
      return consumer.position(tp, Duration.ZERO);
    } catch (KafkaException | IllegalStateException e) {
      return -1;
    }
  }
}
