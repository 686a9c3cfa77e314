package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeSet;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The slow, obvious oracle for the engine: keeps every basket and recomputes exact counts on demand,
 * with the same window semantics (the panes overlapping the newest pane's window) and the direct decay
 * formula 2^(−(asOf − t) / halfLife) per basket (Cormode et al. 2009, Definition 1 with exponential g).
 */
final class ExactOracle {
  record Basket(long eventMillis, List<String> items) {}

  final List<Basket> baskets = new ArrayList<>();
  long watermarkMillis = Long.MIN_VALUE;

  void add(long eventMillis, String... items) {
    TreeSet<String> distinct = new TreeSet<>();
    for (String item : items) {
      if (item != null && !item.isEmpty()) {
        distinct.add(item);
      }
    }
    if (distinct.isEmpty()) {
      return;
    }
    baskets.add(new Basket(eventMillis, List.copyOf(distinct)));
    watermarkMillis = Math.max(watermarkMillis, eventMillis);
  }

  /** The weight of a basket in a horizon as of the watermark (0 if outside a window). */
  double weight(HorizonSpec h, long eventMillis) {
    if (h.isWindow()) {
      long newest = Math.floorDiv(watermarkMillis, h.paneMillis());
      long pane = Math.floorDiv(eventMillis, h.paneMillis());
      return pane > newest - h.paneCount() ? 1.0 : 0.0;
    }
    return Math.pow(2.0, -(double) (watermarkMillis - eventMillis) / h.halfLifeMillis());
  }

  double baskets(HorizonSpec h) {
    double sum = 0;
    for (Basket b : baskets) {
      sum += weight(h, b.eventMillis);
    }
    return sum;
  }

  Map<String, Double> itemCounts(HorizonSpec h) {
    Map<String, Double> counts = new HashMap<>();
    for (Basket b : baskets) {
      double w = weight(h, b.eventMillis);
      if (w > 0) {
        for (String item : b.items) {
          counts.merge(item, w, Double::sum);
        }
      }
    }
    return counts;
  }

  /** Pair counts keyed "a|b" with a < b. */
  Map<String, Double> pairCounts(HorizonSpec h) {
    Map<String, Double> counts = new HashMap<>();
    for (Basket b : baskets) {
      double w = weight(h, b.eventMillis);
      if (w > 0) {
        List<String> items = b.items;
        for (int i = 0; i < items.size(); i++) {
          for (int j = i + 1; j < items.size(); j++) {
            counts.merge(items.get(i) + "|" + items.get(j), w, Double::sum);
          }
        }
      }
    }
    return counts;
  }

  static String[] split(String pairKey) {
    return pairKey.split("\\|", 2);
  }
}
