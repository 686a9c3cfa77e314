package org.pairpulse.serve.internal;

import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.table.PairTableSource;

/** One segment: its table source, its newest floored view, drift monitor and trend history. */
public final class SegmentState {
  private final String name;
  private final PairTableSource source;
  private final DriftMonitor drift;
  private final TrendHistory trend;
  private volatile FlooredTable view;
  long processedVersion = -1;

  SegmentState(String name, PairTableSource source, DriftMonitor drift, TrendHistory trend, FlooredTable initial) {
    this.name = name;
    this.source = source;
    this.drift = drift;
    this.trend = trend;
    this.view = initial;
  }

  public String name() {
    return name;
  }

  public PairTableSource source() {
    return source;
  }

  public DriftMonitor drift() {
    return drift;
  }

  public TrendHistory trend() {
    return trend;
  }

  /** The newest floored view: what requests answer from (never null). */
  public FlooredTable view() {
    return view;
  }

  void view(FlooredTable table) {
    this.view = table;
  }
}
