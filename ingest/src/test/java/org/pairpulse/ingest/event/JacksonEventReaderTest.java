package org.pairpulse.ingest.event;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Random;
import org.junit.jupiter.api.Test;

class JacksonEventReaderTest {
  /** The eight-bytes-at-a-time ASCII scan against a plain byte loop (the oracle), on seeded random ranges. */
  @Test
  void firstNonAsciiAgreesWithAByteLoop() {
    Random random = new Random(5);
    for (int n = 0; n < 20_000; n++) {
      byte[] bytes = new byte[random.nextInt(40)];
      for (int i = 0; i < bytes.length; i++) {
        bytes[i] = (byte) (random.nextInt(30) == 0 ? 0x80 + random.nextInt(128) : random.nextInt(128));
      }
      int from = bytes.length == 0 ? 0 : random.nextInt(bytes.length + 1);
      int to = from + random.nextInt(bytes.length - from + 1);
      int expected = from;
      while (expected < to && bytes[expected] >= 0) {
        expected++;
      }
      assertEquals(expected, JacksonEventReader.firstNonAscii(bytes, from, to));
    }
  }
}
