package org.pairpulse.serve.query;

import java.util.Comparator;
import java.util.List;
import org.pairpulse.sketch.table.PairStats;

/**
 * The most repelling pairs of one horizon ({@code GET /api/v1/pairs/repelling}): only pairs whose lift interval
 * lies below 1 ({@link org.pairpulse.sketch.stats.PairMeasures#isRepelling}), lowest upper lift bound first, then
 * the most negative signed root G², then by ids; a bounded heap over the horizon's pairs.
 */
public final class RepellingPairs {
  private RepellingPairs() {}

  /**
   * @param horizon a horizon of the table
   * @param count at most this many pairs, at least 1
   */
  public record Query(String horizon, int count) {}

  static final Comparator<PairStats> MOST_REPELLING_FIRST =
      Comparator.comparingDouble((PairStats s) -> s.measures().liftUpper())
          .thenComparingDouble(s -> s.measures().signedRootGSquared()).thenComparing(TopPairs.BY_IDS);

  /** The {@code count} most repelling of {@code pairs}, most repelling first. */
  public static List<PairStats> of(List<PairStats> pairs, int count) {
    BoundedBest<PairStats> best = new BoundedBest<>(count, MOST_REPELLING_FIRST);
    for (PairStats pair : pairs) {
      if (pair.measures().isRepelling()) {
        best.offer(pair);
      }
    }
    return best.bestFirst();
  }
}
