package org.pairpulse.ops.product.evaluation;

import java.time.Duration;
import java.util.Objects;
import org.pairpulse.serve.floor.FlooredTable;

/**
 * The "nightly rebuild" baseline: of the tables a refresh publishes, keeps the first one of each period (one
 * simulated day, UTC, by default) and serves it for the whole period, as a batch job that rebuilds the pair
 * table once a night would. Its table version therefore changes at most once per period.
 *
 * <p>When refreshes run on boundaries that divide the day (the backtest checks that), the first refresh of a day
 * is at midnight, or at the first boundary after midnight that a basket reached, which holds the same baskets.
 * Not thread-safe.
 */
public final class NightlyRebuild {
  private final long periodMillis;
  private long period = Long.MIN_VALUE;
  private FlooredTable current;
  private long rebuilds;

  /** @param periodMillis the rebuild period, for instance one day */
  public NightlyRebuild(long periodMillis, FlooredTable initial) {
    if (periodMillis <= 0) {
      throw new IllegalArgumentException("periodMillis must be > 0, got " + periodMillis);
    }
    this.periodMillis = periodMillis;
    this.current = Objects.requireNonNull(initial, "initial");
  }

  /** One rebuild per UTC day. */
  public static NightlyRebuild daily(FlooredTable initial) {
    return new NightlyRebuild(Duration.ofDays(1).toMillis(), initial);
  }

  /**
   * Offers a freshly refreshed table published at {@code atMillis} (event time); it becomes the nightly table
   * if it is the first of a new period. Returns whether it did.
   */
  public boolean offer(long atMillis, FlooredTable table) {
    long offered = Math.floorDiv(atMillis, periodMillis);
    if (period != Long.MIN_VALUE && offered <= period) {
      return false;
    }
    period = offered;
    current = Objects.requireNonNull(table, "table");
    rebuilds++;
    return true;
  }

  /** The table of the current period. */
  public FlooredTable current() {
    return current;
  }

  /** Tables taken so far. */
  public long rebuilds() {
    return rebuilds;
  }
}
