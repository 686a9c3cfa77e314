package org.pairpulse.sketch.snapshot;

/** A snapshot that cannot be read: wrong magic, unknown version, truncated, corrupt or of another configuration. */
public final class SnapshotFormatException extends RuntimeException {
  private static final long serialVersionUID = 1L;

  public SnapshotFormatException(String message) {
    super(message);
  }

  public SnapshotFormatException(String message, Throwable cause) {
    super(message, cause);
  }
}
