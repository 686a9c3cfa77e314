package org.pairpulse.ops.analysis.backtest;

import java.util.List;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertTransition;

/**
 * For a replay's progress lines, one a simulated day: tells which refresh is the first of a new simulated day (UTC,
 * {@link BacktestSettings#DAY_MILLIS}) and counts the alerts raised so far. Fed from
 * {@link Backtest.Listener#refreshed}, so on the replay's thread; not thread-safe.
 */
public final class SimulatedDays {
  private long day = Long.MIN_VALUE;
  private long raised;

  /**
   * Counts the raised alerts among {@code events}; true when {@code atMillis} lies on another day than at the previous
   * call, and on the first call.
   */
  public boolean refreshed(long atMillis, List<AlertEvent> events) {
    raised += events.stream().filter(e -> e.transition() == AlertTransition.RAISED).count();
    long today = Math.floorDiv(atMillis, BacktestSettings.DAY_MILLIS);
    if (today == day) {
      return false;
    }
    day = today;
    return true;
  }

  /** Alerts raised in the refreshes seen so far. */
  public long raised() {
    return raised;
  }
}
