package org.pairpulse.serve.query;

import java.util.Comparator;
import java.util.List;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairStats;

/**
 * The best pairs of one horizon by a measure ({@code GET /api/v1/pairs/top}): highest value first, an undefined
 * value (NaN) last, ties by the items' ids. By the table's own sort measure with bundles included this is the
 * table's first {@code count} pairs (a refresh sorts them so); otherwise a bounded heap over the horizon's pairs.
 */
public final class TopPairs {
  private TopPairs() {}

  /** Ascending by item A, then item B: the tie-break of every pair list. */
  static final Comparator<PairStats> BY_IDS = Comparator.comparing(PairStats::itemA).thenComparing(PairStats::itemB);

  /**
   * @param horizon a horizon of the table
   * @param measure the measure that orders the pairs
   * @param count at most this many pairs, at least 1
   * @param includeBundles whether bundle pairs (bought together nearly always) are listed
   */
  public record Query(String horizon, Measure measure, int count, boolean includeBundles) {}

  /** The answer to {@code query} from {@code view}. */
  public static List<PairStats> of(FlooredTable view, Query query) {
    List<PairStats> all = view.pairs(query.horizon());
    if (query.measure() == view.table().sortMeasure() && query.includeBundles()) {
      return all.subList(0, Math.min(query.count(), all.size()));
    }
    return best(all, query.measure(), query.count(), query.includeBundles());
  }

  /** The {@code count} best of {@code pairs} by {@code measure}, whatever their order. */
  public static List<PairStats> best(List<PairStats> pairs, Measure measure, int count, boolean includeBundles) {
    BoundedBest<PairStats> best = new BoundedBest<>(count, bestFirst(measure));
    for (PairStats pair : pairs) {
      if (includeBundles || !pair.measures().isBundle()) {
        best.offer(pair);
      }
    }
    return best.bestFirst();
  }

  /** Highest {@code measure} first, NaN last, then by ids. */
  static Comparator<PairStats> bestFirst(Measure measure) {
    return Comparator.comparingDouble((PairStats s) -> -key(measure, s)).thenComparing(BY_IDS);
  }

  private static double key(Measure measure, PairStats pair) {
    double value = measure.of(pair.measures());
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }
}
