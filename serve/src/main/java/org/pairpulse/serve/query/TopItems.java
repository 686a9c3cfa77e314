package org.pairpulse.serve.query;

import java.util.Comparator;
import java.util.List;
import java.util.Map;
import org.pairpulse.sketch.stats.Estimate;

/**
 * The most frequent items of one horizon ({@code GET /api/v1/items}), optionally only those whose id starts with a
 * prefix: highest count first, then by id, each with its share of the horizon's baskets; a bounded heap.
 */
public final class TopItems {
  private TopItems() {}

  /**
   * @param horizon a horizon of the table
   * @param count at most this many items, at least 1
   * @param prefix only item ids starting with it ("" for every item)
   */
  public record Query(String horizon, int count, String prefix) {}

  /**
   * One item.
   *
   * @param count the item's basket count (an estimate with bounds)
   * @param share the count's value over the horizon's baskets
   */
  public record ItemShare(String item, Estimate count, double share) {}

  private static final Comparator<Map.Entry<String, Estimate>> MOST_FREQUENT_FIRST =
      Comparator.comparingDouble((Map.Entry<String, Estimate> e) -> -e.getValue().value())
          .thenComparing(Map.Entry::getKey);

  /** The answer for a horizon's item counts and its basket count. */
  public static List<ItemShare> of(Map<String, Estimate> items, double baskets, String prefix, int count) {
    BoundedBest<Map.Entry<String, Estimate>> best = new BoundedBest<>(count, MOST_FREQUENT_FIRST);
    for (Map.Entry<String, Estimate> e : items.entrySet()) {
      if (e.getKey().startsWith(prefix)) {
        best.offer(e);
      }
    }
    return best.bestFirst().stream().map(e -> new ItemShare(e.getKey(), e.getValue(), e.getValue().value() / baskets))
        .toList();
  }
}
