package org.pairpulse.serve;

/**
 * How serve learns about ingest without depending on it: the wiring (ops) implements this over the
 * ingest pipeline. Called from serve's own threads (status requests, the metrics poller) and must
 * not block: return a snapshot the pipeline keeps up to date.
 */
@FunctionalInterface
public interface IngestStatus {
  IngestHealth health();

  /** Nothing wired: {@link IngestHealth#absent()}. */
  static IngestStatus none() {
    return IngestHealth::absent;
  }
}
