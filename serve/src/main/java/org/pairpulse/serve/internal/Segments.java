package org.pairpulse.serve.internal;

import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.table.PairTableSource;

/** Access to {@link SegmentState}'s writer side for the server's watcher. */
public final class Segments {
  private Segments() {}

  public static SegmentState create(String name, PairTableSource source, DriftMonitor drift, TrendHistory trend,
      FlooredTable initial) {
    return new SegmentState(name, source, drift, trend, initial);
  }

  public static long processedVersion(SegmentState segment) {
    return segment.processedVersion;
  }

  public static void processed(SegmentState segment, long version) {
    segment.processedVersion = version;
  }

  public static void view(SegmentState segment, FlooredTable view) {
    segment.view(view);
  }
}
