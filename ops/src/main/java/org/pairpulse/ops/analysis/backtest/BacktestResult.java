package org.pairpulse.ops.analysis.backtest;

import java.util.List;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.engine.EngineStats;

/**
 * What a replay produced.
 *
 * @param settings the settings it ran with
 * @param baskets baskets counted
 * @param firstEventMillis event time of the earliest basket (0 without baskets)
 * @param lastEventMillis event time of the newest basket (0 without baskets)
 * @param refreshes pair tables built
 * @param nightlyRebuilds tables the nightly baseline took (one per simulated day)
 * @param alerts every alert event (raised and resolved), in order
 * @param summaries the periodic pair-table summaries
 * @param evaluation the evaluation, or null
 * @param engineStats the engine's counters at the end
 * @param stateBytes the engine's state size
 * @param finalTable the last floored table
 */
public record BacktestResult(BacktestSettings settings, long baskets, long firstEventMillis, long lastEventMillis,
    long refreshes, long nightlyRebuilds, List<AlertEvent> alerts, List<TableSummary> summaries, Evaluator evaluation,
    EngineStats engineStats, long stateBytes, FlooredTable finalTable) {

  /** Simulated days replayed: (newest − earliest event time) / 1 day. */
  public double simulatedDays() {
    return (lastEventMillis - firstEventMillis) / (double) BacktestSettings.DAY_MILLIS;
  }
}
