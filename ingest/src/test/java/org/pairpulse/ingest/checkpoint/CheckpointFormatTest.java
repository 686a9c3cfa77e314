package org.pairpulse.ingest.checkpoint;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.util.Random;
import java.util.TreeMap;
import java.util.zip.CRC32C;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;

class CheckpointFormatTest {
  static PartitionCheckpoint sample(Random random, int engineBytes) {
    byte[] front = new byte[random.nextInt(100)];
    byte[] engine = new byte[engineBytes];
    random.nextBytes(front);
    random.nextBytes(engine);
    return new PartitionCheckpoint("baskets-\u00e9", 3, 12_345, 7, 1_796_205_600_000L, front, engine);
  }

  @Test
  void roundTripAndEveryCorruptionIsDetected() {
    Random random = new Random(1);
    PartitionCheckpoint cp = sample(random, 5000);
    byte[] bytes = cp.encode();
    assertEquals(bytes.length, cp.encodedBytes());
    PartitionCheckpoint back = PartitionCheckpoint.decode(bytes);
    assertEquals(cp.topic(), back.topic());
    assertEquals(cp.partition(), back.partition());
    assertEquals(cp.nextOffset(), back.nextOffset());
    assertEquals(cp.checkpointId(), back.checkpointId());
    assertArrayEquals(cp.front(), back.front());
    assertArrayEquals(cp.engine(), back.engine());
    for (int i = 0; i < bytes.length; i += 97) {
      byte[] bad = bytes.clone();
      bad[i] ^= 0x10;
      assertThrows(SnapshotFormatException.class, () -> PartitionCheckpoint.decode(bad), "flipped byte " + i);
    }
    assertThrows(SnapshotFormatException.class, () -> PartitionCheckpoint.decode(java.util.Arrays.copyOf(bytes, bytes.length - 1)));
  }

  @Test
  void segmentsRoundTripInNameOrder() {
    Random random = new Random(3);
    PartitionCheckpoint plain = sample(random, 700);
    TreeMap<String, byte[]> segments = new TreeMap<>();
    for (String name : new String[] {"region=south", "channel=app", "region=north-\u00e9"}) {
      byte[] engine = new byte[50 + random.nextInt(500)];
      random.nextBytes(engine);
      segments.put(name, engine);
    }
    PartitionCheckpoint cp = new PartitionCheckpoint(plain.topic(), 1, 99, 2, 5, plain.front(), plain.engine(), segments);
    byte[] bytes = cp.encode();
    assertEquals(2, bytes[4], "format version 2");
    assertEquals(bytes.length, cp.encodedBytes());
    PartitionCheckpoint back = PartitionCheckpoint.decode(bytes);
    assertEquals(java.util.List.copyOf(segments.keySet()), java.util.List.copyOf(back.segments().keySet()));
    segments.forEach((name, engine) -> assertArrayEquals(engine, back.segments().get(name), name));
    assertArrayEquals(plain.engine(), back.engine());
    for (int i = 0; i < bytes.length; i += 31) {
      byte[] bad = bytes.clone();
      bad[i] ^= 0x04;
      assertThrows(SnapshotFormatException.class, () -> PartitionCheckpoint.decode(bad), "flipped byte " + i);
    }
  }

  /** A version-1 checkpoint (before segments), built by hand from the byte table, still decodes: no segments. */
  @Test
  void readsVersionOneCheckpoints() {
    byte[] topic = "shop.baskets".getBytes(StandardCharsets.UTF_8);
    byte[] front = {1, 2, 3};
    byte[] engine = {9, 8, 7, 6};
    int payload = 4 + topic.length + 4 + 8 + 8 + 8 + 4 + front.length + 4 + engine.length;
    ByteBuffer out = ByteBuffer.allocate(24 + payload);
    out.put(new byte[] {'P', 'P', 'C', 'K', 1, 0, 0, 0}).putLong(payload).putInt(0).putInt(0);
    out.putInt(topic.length).put(topic).putInt(4).putLong(1234).putLong(17).putLong(1_796_205_600_000L)
        .putInt(front.length).put(front).putInt(engine.length).put(engine);
    byte[] bytes = out.array();
    CRC32C crc = new CRC32C();
    crc.update(bytes, 24, payload);
    ByteBuffer.wrap(bytes).putInt(16, (int) crc.getValue());
    PartitionCheckpoint cp = PartitionCheckpoint.decode(bytes);
    assertEquals("shop.baskets", cp.topic());
    assertEquals(4, cp.partition());
    assertEquals(1234, cp.nextOffset());
    assertArrayEquals(engine, cp.engine());
    assertTrue(cp.segments().isEmpty());
    bytes[4] = 3;
    SnapshotFormatException e = assertThrows(SnapshotFormatException.class, () -> PartitionCheckpoint.decode(bytes));
    assertTrue(e.getMessage().contains("format 3 is not supported"), e.getMessage());
  }

  @Test
  void localStoreReplacesAtomicallyAndRefusesCorruptFiles(@TempDir Path dir) throws Exception {
    LocalDirectoryStore store = new LocalDirectoryStore(dir);
    Random random = new Random(2);
    assertTrue(store.load("t", 0).isEmpty());
    PartitionCheckpoint first = sample(random, 100);
    store.save(new PartitionCheckpoint("t", 0, 1, 1, 0, first.front(), first.engine()));
    store.save(new PartitionCheckpoint("t", 0, 2, 2, 0, first.front(), first.engine()));
    assertEquals(2, store.load("t", 0).orElseThrow().nextOffset());
    try (var files = Files.list(dir)) {
      assertEquals(1, files.count(), "no temporary file left behind");
    }
    byte[] bytes = Files.readAllBytes(store.fileOf("t", 0));
    bytes[bytes.length - 1] ^= 1;
    Files.write(store.fileOf("t", 0), bytes);
    assertThrows(SnapshotFormatException.class, () -> store.load("t", 0));
  }
}
