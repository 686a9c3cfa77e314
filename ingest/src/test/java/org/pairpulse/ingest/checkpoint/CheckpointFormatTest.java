package org.pairpulse.ingest.checkpoint;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Random;
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
