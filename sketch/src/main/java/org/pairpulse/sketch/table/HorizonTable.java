package org.pairpulse.sketch.table;

import java.util.Collections;
import java.util.List;
import java.util.Map;
import org.pairpulse.sketch.stats.Estimate;

/**
 * One horizon's part of a pair table: N, the tracked items' counts, every tracked pair's statistics
 * (sorted by the table's measure, best first) and each item's neighbours in that order.
 *
 * @param name the horizon
 * @param baskets N in basket units as of the watermark
 * @param pairs all published pairs, best first
 * @param neighbours for each item, the published pairs that contain it, best first
 * @param itemCounts n_a of every tracked item
 * @param halfLifeMillis the half-life of a decay horizon, 0 for a window (or when unknown)
 */
public record HorizonTable(String name, double baskets, List<PairStats> pairs, Map<String, List<PairStats>> neighbours,
    Map<String, Estimate> itemCounts, long halfLifeMillis) {

  /** A horizon table without a half-life (a window, or a decay whose half-life is not known). */
  public HorizonTable(String name, double baskets, List<PairStats> pairs, Map<String, List<PairStats>> neighbours,
      Map<String, Estimate> itemCounts) {
    this(name, baskets, pairs, neighbours, itemCounts, 0L);
  }

  public HorizonTable {
    pairs = Collections.unmodifiableList(pairs);
    neighbours = Collections.unmodifiableMap(neighbours);
    itemCounts = Collections.unmodifiableMap(itemCounts);
  }

  /** The neighbours of {@code item}, best first; empty for unknown items. */
  public List<PairStats> neighboursOf(String item) {
    return neighbours.getOrDefault(item, List.of());
  }
}
