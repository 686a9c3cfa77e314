package org.pairpulse.ingest.checkpoint;

import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.util.Collections;
import java.util.Map;
import java.util.Objects;
import java.util.SortedMap;
import java.util.TreeMap;
import org.pairpulse.sketch.snapshot.PayloadCheck;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;

/**
 * A checkpoint of one input partition: the state (front, the engine snapshot of segment {@code all} and those
 * of the partition's other segments) and the offset it covers. Restoring it and reading on from
 * {@code nextOffset} gives the state an uninterrupted run would have.
 *
 * <pre>
 * offset  bytes  field
 * ------  -----  ----------------------------------------------------------------------
 *   0       4    MAGIC           0x50 0x50 0x43 0x4B ("PPCK")
 *   4       1    FORMAT_VERSION  2 (1 is read too: it has no segment section)
 *   5       3    reserved        0
 *   8       8    PAYLOAD_BYTES   length L of the payload (big-endian)
 *  16       4    PAYLOAD_CRC     CRC32C of the payload
 *  20       4    reserved        0
 *  24       L    payload:
 *                  topicLength:int, topic:UTF-8 bytes, partition:int, nextOffset:long,
 *                  checkpointId:long, createdAtMillis:long,
 *                  frontLength:int, front bytes   (see PartitionFront#encode)
 *                  engineLength:int, engine bytes (see sketch's Snapshots): segment all
 *                  segmentCount:int                               (version 2 only)
 *                  per segment, in name order:
 *                    nameLength:int, name:UTF-8 bytes ("attribute=value"),
 *                    engineLength:int, engine bytes
 * </pre>
 *
 * @param topic input topic
 * @param partition input partition
 * @param nextOffset the first offset not covered: reading resumes here
 * @param checkpointId grows by one per checkpoint of this partition
 * @param createdAtMillis wall-clock time the checkpoint was taken
 * @param front the partition front's state
 * @param engine the engine snapshot of segment {@code all}
 * @param segments the engine snapshots of the other segments by name (read-only, name order; empty without
 *     segment attributes)
 */
public record PartitionCheckpoint(String topic, int partition, long nextOffset, long checkpointId, long createdAtMillis,
    byte[] front, byte[] engine, SortedMap<String, byte[]> segments) {
  static final int MAGIC = 0x5050_434B;
  static final byte FORMAT_VERSION = 2;
  /** The version before segments; still read. */
  static final byte FORMAT_VERSION_1 = 1;
  static final int OFFSET_VERSION = 4;
  static final int OFFSET_PAYLOAD_BYTES = 8;
  static final int OFFSET_CRC = 16;
  static final int HEADER_BYTES = 24;

  public PartitionCheckpoint {
    Objects.requireNonNull(topic, "topic");
    Objects.requireNonNull(front, "front");
    Objects.requireNonNull(engine, "engine");
    segments = Collections.unmodifiableSortedMap(new TreeMap<>(segments == null ? Map.of() : segments));
  }

  /** A checkpoint without segments. */
  public PartitionCheckpoint(String topic, int partition, long nextOffset, long checkpointId, long createdAtMillis,
      byte[] front, byte[] engine) {
    this(topic, partition, nextOffset, checkpointId, createdAtMillis, front, engine, new TreeMap<>());
  }

  private int segmentBytes() {
    int bytes = 4;
    for (Map.Entry<String, byte[]> e : segments.entrySet()) {
      bytes += 4 + e.getKey().getBytes(StandardCharsets.UTF_8).length + 4 + e.getValue().length;
    }
    return bytes;
  }

  /** The encoded checkpoint (the byte table above). */
  public byte[] encode() {
    byte[] topicBytes = topic.getBytes(StandardCharsets.UTF_8);
    int payload = 4 + topicBytes.length + 4 + 8 + 8 + 8 + 4 + front.length + 4 + engine.length + segmentBytes();
    ByteBuffer out = ByteBuffer.allocate(HEADER_BYTES + payload);
    out.putInt(MAGIC).put(FORMAT_VERSION).put(new byte[3]).putLong(payload).putInt(0).putInt(0);
    out.putInt(topicBytes.length).put(topicBytes).putInt(partition).putLong(nextOffset).putLong(checkpointId)
        .putLong(createdAtMillis).putInt(front.length).put(front).putInt(engine.length).put(engine);
    out.putInt(segments.size());
    for (Map.Entry<String, byte[]> e : segments.entrySet()) {
      byte[] name = e.getKey().getBytes(StandardCharsets.UTF_8);
      out.putInt(name.length).put(name).putInt(e.getValue().length).put(e.getValue());
    }
    byte[] bytes = out.array();
    ByteBuffer.wrap(bytes).putInt(OFFSET_CRC, PayloadCheck.crcAfter(bytes, HEADER_BYTES));
    return bytes;
  }

  /** Decodes {@link #encode}'s bytes; a {@link SnapshotFormatException} for anything unreadable. */
  public static PartitionCheckpoint decode(byte[] bytes) {
    if (bytes == null || bytes.length < HEADER_BYTES) {
      throw new SnapshotFormatException("partition checkpoint truncated: " + (bytes == null ? 0 : bytes.length) + " bytes");
    }
    ByteBuffer in = ByteBuffer.wrap(bytes);
    if (in.getInt(0) != MAGIC) {
      throw new SnapshotFormatException("not a pairpulse partition checkpoint (bad magic)");
    }
    byte version = bytes[OFFSET_VERSION];
    if (version != FORMAT_VERSION && version != FORMAT_VERSION_1) {
      throw new SnapshotFormatException("partition checkpoint format " + version
          + " is not supported; this build reads " + FORMAT_VERSION_1 + " and " + FORMAT_VERSION);
    }
    PayloadCheck.check("partition checkpoint", bytes, HEADER_BYTES, in.getLong(OFFSET_PAYLOAD_BYTES), in.getInt(OFFSET_CRC));
    try {
      in.position(HEADER_BYTES);
      byte[] topicBytes = new byte[in.getInt()];
      in.get(topicBytes);
      int partition = in.getInt();
      long nextOffset = in.getLong();
      long checkpointId = in.getLong();
      long createdAt = in.getLong();
      byte[] front = new byte[in.getInt()];
      in.get(front);
      byte[] engine = new byte[in.getInt()];
      in.get(engine);
      SortedMap<String, byte[]> segments = new TreeMap<>();
      if (version == FORMAT_VERSION) {
        int count = in.getInt();
        if (count < 0) {
          throw new SnapshotFormatException("partition checkpoint has a negative segment count");
        }
        for (int i = 0; i < count; i++) {
          byte[] name = new byte[in.getInt()];
          in.get(name);
          byte[] segment = new byte[in.getInt()];
          in.get(segment);
          if (segments.put(new String(name, StandardCharsets.UTF_8), segment) != null) {
            throw new SnapshotFormatException("partition checkpoint names a segment twice");
          }
        }
      }
      if (in.hasRemaining()) {
        throw new SnapshotFormatException("partition checkpoint has " + in.remaining() + " trailing bytes");
      }
      return new PartitionCheckpoint(new String(topicBytes, StandardCharsets.UTF_8), partition, nextOffset, checkpointId,
          createdAt, front, engine, segments);
    } catch (RuntimeException e) {
      if (e instanceof SnapshotFormatException s) {
        throw s;
      }
      throw new SnapshotFormatException("partition checkpoint unreadable: " + e, e);
    }
  }

  /** Bytes of the encoded checkpoint. */
  public long encodedBytes() {
    return HEADER_BYTES + 4L + topic.getBytes(StandardCharsets.UTF_8).length + 28 + 4 + front.length + 4 + engine.length
        + segmentBytes();
  }
}
