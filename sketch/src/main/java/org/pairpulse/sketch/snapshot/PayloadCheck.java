package org.pairpulse.sketch.snapshot;

import java.util.zip.CRC32C;

/**
 * The check every pairpulse binary format makes before decoding (engine snapshots, ingest's partition checkpoints):
 * the payload after the header has the length the header states, and its CRC-32C (Castagnoli) is the one the
 * header holds. A mismatch is a {@link SnapshotFormatException} naming the format.
 */
public final class PayloadCheck {
  private PayloadCheck() {}

  /** The CRC-32C of {@code bytes} after the first {@code headerBytes}. */
  public static int crcAfter(byte[] bytes, int headerBytes) {
    CRC32C crc = new CRC32C();
    crc.update(bytes, headerBytes, bytes.length - headerBytes);
    return (int) crc.getValue();
  }

  /**
   * @param what the format's name in messages ("snapshot", "partition checkpoint")
   * @param declaredPayloadBytes the payload length the header states
   * @param declaredCrc the checksum the header holds
   */
  public static void check(String what, byte[] bytes, int headerBytes, long declaredPayloadBytes, int declaredCrc) {
    if (declaredPayloadBytes != bytes.length - headerBytes) {
      throw new SnapshotFormatException(what + " truncated or padded: header says " + declaredPayloadBytes
          + " payload bytes, found " + (bytes.length - headerBytes));
    }
    int actual = crcAfter(bytes, headerBytes);
    if (actual != declaredCrc) {
      throw new SnapshotFormatException(String.format("%s corrupt: checksum 0x%08X, header says 0x%08X", what, actual,
          declaredCrc));
    }
  }
}
