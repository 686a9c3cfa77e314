package org.pairpulse.serve;

import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.TreeMap;

/**
 * What serve shows of ingest (status endpoint, dashboard, {@code /metrics}), as reported by the
 * wiring's {@link IngestStatus}.
 *
 * @param state the ingest pipeline's state
 * @param basketsTotal baskets counted since start
 * @param basketsPerSecond recent rate of baskets counted
 * @param recordsPerSecond recent rate of input records read (line items or baskets)
 * @param lagRecords consumer lag summed over partitions (−1 when unknown)
 * @param deadLettersByReason dead letters since start, by reason (e.g. {@code late}, {@code invalid})
 * @param watermarkMillis newest event time counted (Long.MIN_VALUE before any)
 * @param detail a short human note (e.g. the failure), or empty
 */
public record IngestHealth(State state, long basketsTotal, double basketsPerSecond, double recordsPerSecond,
    long lagRecords, Map<String, Long> deadLettersByReason, long watermarkMillis, String detail) {

  /** Ingest states; {@link #ABSENT} when nothing is wired (serve alone, tests, replays). */
  public enum State {
    STARTING, RUNNING, STOPPED, FAILED, ABSENT;

    public String wireName() {
      return name().toLowerCase(Locale.ROOT);
    }
  }

  public IngestHealth {
    Objects.requireNonNull(state, "state");
    deadLettersByReason = Map.copyOf(new TreeMap<>(deadLettersByReason));
    detail = detail == null ? "" : detail;
  }

  /** No ingest wired. */
  public static IngestHealth absent() {
    return new IngestHealth(State.ABSENT, 0, 0, 0, -1, Map.of(), Long.MIN_VALUE, "no ingest pipeline is wired");
  }

  /** Dead letters over all reasons. */
  public long deadLettersTotal() {
    return deadLettersByReason.values().stream().mapToLong(Long::longValue).sum();
  }
}
