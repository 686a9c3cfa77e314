package org.pairpulse.serve.internal;

import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.table.PairTableSource;

/**
 * One segment: its table source, its newest floored view, drift monitor and trend history. Requests read the
 * view (volatile); only the refresh loop writes it and the processed version.
 */
final class SegmentState {
  private final String name;
  private final PairTableSource source;
  private final DriftMonitor drift;
  private final TrendHistory trend;
  private volatile FlooredTable view;
  /** The table version last processed (refresh loop only); -1 before the first. */
  long processedVersion = -1;

  SegmentState(String name, PairTableSource source, DriftMonitor drift, TrendHistory trend, FlooredTable initial) {
    this.name = name;
    this.source = source;
    this.drift = drift;
    this.trend = trend;
    this.view = initial;
  }

  String name() {
    return name;
  }

  PairTableSource source() {
    return source;
  }

  DriftMonitor drift() {
    return drift;
  }

  TrendHistory trend() {
    return trend;
  }

  /** The newest floored view: what requests answer from (never null). */
  FlooredTable view() {
    return view;
  }

  void view(FlooredTable table) {
    this.view = table;
  }
}
