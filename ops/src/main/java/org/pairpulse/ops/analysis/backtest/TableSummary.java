package org.pairpulse.ops.analysis.backtest;

import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * A pair table at one moment of a replay: the best published pairs of each horizon (the cohort floor applied, in
 * the table's order, shrunk lift by default) and the table's size.
 *
 * @param atMillis event time of the refresh
 * @param version the table version
 * @param trackedPairs pairs in the table before the floor
 * @param publishedPairs pair statistics published over all horizons
 * @param suppressedPairs pair statistics held back by the cohort floor over all horizons
 * @param baskets N of each horizon (NaN when under the floor)
 * @param top the best pairs of each horizon, best first
 */
public record TableSummary(long atMillis, long version, int trackedPairs, int publishedPairs, int suppressedPairs,
    Map<String, Double> baskets, Map<String, List<PairSummary>> top) {

  /**
   * One pair's published evidence in one horizon.
   *
   * @param itemA one item
   * @param itemB the other
   * @param pairBaskets n_ab
   * @param support n_ab / N
   * @param confidenceAB n_ab / n_a
   * @param confidenceBA n_ab / n_b
   * @param lift the lift
   * @param liftLower lower end of the lift interval
   * @param liftUpper upper end (may be +∞)
   * @param shrunkLift the shrunk lift
   * @param bundle whether it is a bundle pair
   * @param repelling whether it is a repelling pair
   */
  public record PairSummary(String itemA, String itemB, double pairBaskets, double support, double confidenceAB,
      double confidenceBA, double lift, double liftLower, double liftUpper, double shrunkLift, boolean bundle,
      boolean repelling) {

    static PairSummary of(PairStats stats) {
      PairMeasures m = stats.measures();
      return new PairSummary(stats.itemA(), stats.itemB(), stats.counts().countAB().value(), m.support(),
          m.confidenceAB(), m.confidenceBA(), m.lift(), m.liftLower(), m.liftUpper(), m.shrunkLift(), m.isBundle(),
          m.isRepelling());
    }
  }

  /** The summary of {@code table} at {@code atMillis}, with the {@code top} best pairs per horizon. */
  public static TableSummary of(FlooredTable table, long atMillis, int top) {
    Map<String, Double> baskets = new LinkedHashMap<>();
    Map<String, List<PairSummary>> best = new LinkedHashMap<>();
    for (String horizon : table.horizonNames()) {
      baskets.put(horizon, table.baskets(horizon));
      List<PairStats> pairs = table.pairs(horizon);
      List<PairSummary> list = new ArrayList<>(Math.min(top, pairs.size()));
      for (int i = 0; i < pairs.size() && i < top; i++) {
        list.add(PairSummary.of(pairs.get(i)));
      }
      best.put(horizon, List.copyOf(list));
    }
    return new TableSummary(atMillis, table.version(), table.table().pairCount(), table.publishedPairs(),
        table.suppressedPairs(), baskets, best);
  }
}
