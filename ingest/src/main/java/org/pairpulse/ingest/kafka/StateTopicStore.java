package org.pairpulse.ingest.kafka;

import java.io.ByteArrayOutputStream;
import java.io.DataOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.TreeMap;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.function.ToLongFunction;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.clients.producer.RecordMetadata;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Group-mode checkpoints in a compacted state topic.
 *
 * <h2>Layout</h2>
 * A partition's checkpoint (see {@link PartitionCheckpoint}) is cut into chunks no larger than the
 * broker's message limit; chunk i of input partition (topic, p) is a record of state partition
 * {@code p mod statePartitions} with key {@code (group, topic, p, i)}, so compaction keeps the newest
 * chunk of every index. Chunks beyond a shorter new checkpoint get tombstones. Each chunk's value:
 *
 * <pre>
 * offset  bytes  field
 *   0       4    MAGIC          0x50 0x50 0x43 0x48 ("PPCH")
 *   4       1    FORMAT_VERSION 1
 *   5       3    reserved       0
 *   8       8    CHECKPOINT_ID  of the partition checkpoint
 *  16       4    CHUNK_INDEX    i
 *  20       4    CHUNK_COUNT    n
 *  24       8    TOTAL_BYTES    of the encoded partition checkpoint
 *  32       *    the chunk's bytes
 * </pre>
 *
 * <h2>Atomicity</h2>
 * The chunks are sent in the ingestor's open transaction; the consumer offsets follow in the same
 * transaction, each with metadata {@code "pp1 <statePartition> <firstChunkOffset> <chunkCount> <checkpointId>"}
 * saying where its checkpoint starts. So the offsets and the state they describe commit together or not
 * at all. A running instance reads the chunks as its one consumer polls them ({@link StateTap}) and restores
 * the checkpoint the metadata names; an outside reader ({@link StateTopicReader}, {@link #load}) seeks to that
 * offset and reads the chunks ({@code read_committed}); without usable metadata either takes the newest complete
 * checkpoint of the state partition.
 *
 * <h2>Open transactions ahead of a checkpoint</h2>
 * A {@code read_committed} reader sees nothing past a partition's last stable offset (LSO), the start of
 * its oldest open transaction. An instance killed while it wrote a checkpoint leaves such a transaction
 * on its state partition until the coordinator aborts it ({@code transaction.timeout.ms} after it began).
 * Checkpoints that other instances commit there meanwhile are committed, and their offsets point at
 * them, but they stay invisible until then. A restore therefore waits, up to its timeout, while the LSO
 * is below the log end; it gives up early only once it has read everything up to the log end.
 */
final class StateTopicStore {
  private static final Logger LOG = LoggerFactory.getLogger(StateTopicStore.class);
  static final int MAGIC = 0x5050_4348;
  static final byte FORMAT_VERSION = 1;
  static final int CHUNK_HEADER_BYTES = 32;
  static final String METADATA_PREFIX = "pp1";

  private final String stateTopic;
  private final String group;
  private final int statePartitions;
  private final int chunkBytes;
  private final Producer<byte[], byte[]> producer;
  private final Duration timeout;
  private final ToLongFunction<TopicPartition> logEnd;
  /** Chunks of the last checkpoint written or read, per input partition (for tombstones). */
  private final Map<TopicPartition, Integer> lastChunkCount = new HashMap<>();

  /**
   * @param timeout longest wait for a checkpoint hidden behind an open transaction (see above)
   * @param logEnd the log end offset (high watermark, {@code read_uncommitted}) of a state partition, or −1
   *     when it cannot be told
   */
  StateTopicStore(String stateTopic, String group, int statePartitions, int chunkBytes, Producer<byte[], byte[]> producer,
      Duration timeout, ToLongFunction<TopicPartition> logEnd) {
    if (chunkBytes < 1024) {
      throw new IllegalArgumentException("state chunk must be at least 1 KiB, got " + chunkBytes);
    }
    this.stateTopic = stateTopic;
    this.group = group;
    this.statePartitions = statePartitions;
    this.chunkBytes = chunkBytes;
    this.producer = producer;
    this.timeout = timeout;
    this.logEnd = logEnd;
  }

  int chunkBytes() {
    return chunkBytes;
  }

  int statePartitionOf(TopicPartition tp) {
    return tp.partition() % statePartitions;
  }

  byte[] keyOf(TopicPartition tp, int chunk) {
    try {
      ByteArrayOutputStream bytes = new ByteArrayOutputStream(64);
      DataOutputStream out = new DataOutputStream(bytes);
      out.writeUTF(group);
      out.writeUTF(tp.topic());
      out.writeInt(tp.partition());
      out.writeInt(chunk);
      return bytes.toByteArray();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /**
   * Sends the checkpoints' chunks in the open transaction and waits for the broker's acknowledgements;
   * returns the offsets to commit with them (with their location metadata) and the bytes written.
   */
  Written write(List<PartitionCheckpoint> checkpoints) {
    Map<TopicPartition, List<Future<RecordMetadata>>> sent = new HashMap<>();
    long bytes = 0;
    for (PartitionCheckpoint cp : checkpoints) {
      TopicPartition tp = new TopicPartition(cp.topic(), cp.partition());
      byte[] encoded = cp.encode();
      bytes += encoded.length;
      int payload = chunkBytes - CHUNK_HEADER_BYTES;
      int count = Math.max(1, (encoded.length + payload - 1) / payload);
      int statePartition = statePartitionOf(tp);
      List<Future<RecordMetadata>> futures = new ArrayList<>(count);
      for (int i = 0; i < count; i++) {
        int from = i * payload;
        int length = Math.min(payload, encoded.length - from);
        ByteBuffer value = ByteBuffer.allocate(CHUNK_HEADER_BYTES + length);
        value.putInt(MAGIC).put(FORMAT_VERSION).put(new byte[3]).putLong(cp.checkpointId()).putInt(i).putInt(count)
            .putLong(encoded.length).put(encoded, from, length);
        futures.add(producer.send(new ProducerRecord<>(stateTopic, statePartition, keyOf(tp, i), value.array())));
      }
      int previous = lastChunkCount.getOrDefault(tp, 0);
      for (int i = count; i < previous; i++) {
        producer.send(new ProducerRecord<>(stateTopic, statePartition, keyOf(tp, i), null));
      }
      lastChunkCount.put(tp, count);
      sent.put(tp, futures);
    }
    producer.flush();
    Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
    for (PartitionCheckpoint cp : checkpoints) {
      TopicPartition tp = new TopicPartition(cp.topic(), cp.partition());
      List<Future<RecordMetadata>> futures = sent.get(tp);
      long first;
      try {
        first = futures.get(0).get().offset();
        for (Future<RecordMetadata> f : futures) {
          f.get();
        }
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        throw new KafkaException("interrupted while writing the checkpoint of " + tp, e);
      } catch (ExecutionException e) {
        throw new KafkaException("checkpoint chunk of " + tp + " not written: " + e.getCause(), e.getCause());
      }
      String metadata = METADATA_PREFIX + " " + statePartitionOf(tp) + " " + first + " " + futures.size() + " " + cp.checkpointId();
      offsets.put(tp, new OffsetAndMetadata(cp.nextOffset(), metadata));
    }
    return new Written(offsets, bytes);
  }

  record Written(Map<TopicPartition, OffsetAndMetadata> offsets, long bytes) {}

  /**
   * The partition's checkpoint, read with {@code reader} (a {@code read_committed} consumer without a group, of an
   * outside reader such as {@link StateTopicReader}: a running instance reads through its {@link StateTap}): through
   * the commit metadata if given, else by scanning.
   */
  Optional<PartitionCheckpoint> load(Consumer<byte[], byte[]> reader, TopicPartition tp, OffsetAndMetadata committed) {
    Optional<PartitionCheckpoint> found = Optional.empty();
    if (committed != null && committed.metadata() != null && committed.metadata().startsWith(METADATA_PREFIX + " ")) {
      String[] parts = committed.metadata().split(" ");
      try {
        int statePartition = Integer.parseInt(parts[1]);
        long first = Long.parseLong(parts[2]);
        int count = Integer.parseInt(parts[3]);
        long checkpointId = Long.parseLong(parts[4]);
        found = readAt(reader, tp, statePartition, first, count, checkpointId);
        if (found.isEmpty()) {
          LOG.warn("checkpoint of {} not found where its commit metadata points ({}); scanning the state topic", tp,
              committed.metadata());
        }
      } catch (RuntimeException e) {
        if (e instanceof SnapshotFormatException s) {
          throw s;
        }
        LOG.warn("commit metadata of {} unusable ({}); scanning the state topic", tp, e.toString());
      }
    }
    if (found.isEmpty()) {
      found = scan(reader, tp);
    }
    if (found.isPresent() && committed != null && found.get().nextOffset() != committed.offset()) {
      LOG.warn("checkpoint of {} covers up to offset {}, the group committed {}; resuming from the checkpoint", tp,
          found.get().nextOffset(), committed.offset());
    }
    found.ifPresent(cp -> restored(tp, cp));
    return found;
  }

  /** {@code cp} was restored: a shorter later checkpoint of {@code tp} tombstones its extra chunks. */
  void restored(TopicPartition tp, PartitionCheckpoint cp) {
    lastChunkCount.merge(tp, chunkCountOf(cp), Math::max);
  }

  private int chunkCountOf(PartitionCheckpoint cp) {
    int payload = chunkBytes - CHUNK_HEADER_BYTES;
    return (int) Math.max(1, (cp.encodedBytes() + payload - 1) / payload);
  }

  private Optional<PartitionCheckpoint> readAt(Consumer<byte[], byte[]> reader, TopicPartition tp, int statePartition,
      long first, int count, long id) {
    TopicPartition source = new TopicPartition(stateTopic, statePartition);
    reader.assign(List.of(source));
    reader.seek(source, first);
    Assembly assembly = new Assembly(count, id);
    long started = System.nanoTime();
    long deadline = started + timeout.toNanos();
    boolean told = false;
    byte[] key0 = keyOf(tp, 0);
    byte[] prefix = new byte[key0.length - 4];
    System.arraycopy(key0, 0, prefix, 0, prefix.length);
    long stable = endOffset(reader, source);
    while (true) {
      if (reader.position(source) >= stable) {
        stable = endOffset(reader, source);
        if (reader.position(source) >= stable) {
          long end = logEnd.applyAsLong(source);
          if (end >= 0 && stable >= end) {
            return Optional.empty(); // everything there is has been read: the chunks are not there
          }
          if (System.nanoTime() > deadline) {
            LOG.warn("checkpoint {} of {} is still hidden behind an open transaction on {} (last stable offset {}, log end {}) "
                + "after {} s", id, tp, source, stable, end, timeout.toSeconds());
            return Optional.empty();
          }
          if (!told && System.nanoTime() - started > TimeUnit.SECONDS.toNanos(1)) {
            LOG.info("checkpoint {} of {} (offset {} of {}) is behind an open transaction (last stable offset {}, log end {}); "
                + "waiting up to {} s for it to end", id, tp, first, source, stable, end, timeout.toSeconds());
            told = true;
          }
        }
      } else if (System.nanoTime() > deadline) {
        LOG.warn("timed out reading checkpoint {} of {} from {} after {} s", id, tp, source, timeout.toSeconds());
        return Optional.empty();
      }
      for (ConsumerRecord<byte[], byte[]> r : reader.poll(Duration.ofMillis(200))) {
        if (r.value() == null || !startsWith(r.key(), prefix)) {
          continue;
        }
        ByteBuffer v = ByteBuffer.wrap(r.value());
        if (v.getInt(0) != MAGIC || v.getLong(8) != id) {
          continue;
        }
        assembly.add(v);
        if (assembly.complete()) {
          if (told) {
            LOG.info("checkpoint {} of {} became readable after {} ms", id, tp,
                TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - started));
          }
          return Optional.of(PartitionCheckpoint.decode(assembly.bytes()));
        }
      }
    }
  }

  /** Reads the whole state partition and keeps the newest complete checkpoint of {@code tp}. */
  private Optional<PartitionCheckpoint> scan(Consumer<byte[], byte[]> reader, TopicPartition tp) {
    TopicPartition source = new TopicPartition(stateTopic, statePartitionOf(tp));
    reader.assign(List.of(source));
    reader.seekToBeginning(List.of(source));
    long end = endOffset(reader, source);
    byte[] key0 = keyOf(tp, 0);
    byte[] prefix = new byte[key0.length - 4];
    System.arraycopy(key0, 0, prefix, 0, prefix.length);
    TreeMap<Long, Assembly> byId = new TreeMap<>();
    long deadline = System.nanoTime() + timeout.toNanos();
    while (reader.position(source) < end) {
      if (System.nanoTime() > deadline) {
        throw new KafkaException("timed out reading the state topic " + stateTopic + " for " + tp);
      }
      for (ConsumerRecord<byte[], byte[]> r : reader.poll(Duration.ofMillis(200))) {
        if (r.value() == null || !startsWith(r.key(), prefix)) {
          continue;
        }
        ByteBuffer v = ByteBuffer.wrap(r.value());
        if (v.getInt(0) != MAGIC || v.get(4) != FORMAT_VERSION) {
          continue;
        }
        long id = v.getLong(8);
        byId.computeIfAbsent(id, k -> new Assembly(v.getInt(20), id)).add(v);
      }
    }
    for (Assembly assembly : byId.descendingMap().values()) {
      if (assembly.complete()) {
        return Optional.of(PartitionCheckpoint.decode(assembly.bytes()));
      }
    }
    return Optional.empty();
  }

  private long endOffset(Consumer<byte[], byte[]> reader, TopicPartition source) {
    return reader.endOffsets(List.of(source), timeout).get(source);
  }

  private static boolean startsWith(byte[] key, byte[] prefix) {
    return key != null && key.length == prefix.length + 4
        && java.util.Arrays.equals(key, 0, prefix.length, prefix, 0, prefix.length);
  }

  /** Chunks of one checkpoint being put back together. */
  private static final class Assembly {
    final byte[][] chunks;
    final long id;
    int present;
    long totalBytes = -1;

    Assembly(int count, long id) {
      this.chunks = new byte[Math.max(count, 1)][];
      this.id = id;
    }

    void add(ByteBuffer v) {
      int index = v.getInt(16);
      int count = v.getInt(20);
      if (count != chunks.length || index < 0 || index >= count) {
        return;
      }
      totalBytes = v.getLong(24);
      if (chunks[index] == null) {
        present++;
      }
      byte[] data = new byte[v.capacity() - CHUNK_HEADER_BYTES];
      v.get(CHUNK_HEADER_BYTES, data);
      chunks[index] = data;
    }

    boolean complete() {
      return present == chunks.length;
    }

    byte[] bytes() {
      ByteBuffer out = ByteBuffer.allocate((int) totalBytes);
      for (byte[] chunk : chunks) {
        if (chunk.length > out.remaining()) {
          throw new SnapshotFormatException("checkpoint " + id + " chunks exceed its stated size " + totalBytes);
        }
        out.put(chunk);
      }
      if (out.hasRemaining()) {
        throw new SnapshotFormatException("checkpoint " + id + " chunks fall short of its stated size " + totalBytes);
      }
      return out.array();
    }
  }
}
