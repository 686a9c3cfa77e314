package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeSet;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The engine's oracle: the shared exact counts ({@link ExactCounts}: N, n_a, n_ab per window or decay as of the
 * watermark) of every basket kept, plus what only the engine's tests need, recomputed from every basket with the
 * direct decay formula 2^(−(asOf − t) / halfLife) per basket (Cormode et al. 2009, Definition 1 with exponential g):
 * the fractional rank weights and the size-adjusted null model's sums.
 */
final class ExactOracle {
  record Basket(long eventMillis, List<String> items) {}

  final List<Basket> baskets = new ArrayList<>();
  long watermarkMillis = Long.MIN_VALUE;
  private final Map<HorizonSpec, ExactCounts> counted = new HashMap<>();
  private final Map<HorizonSpec, Integer> countedBaskets = new HashMap<>();

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

  /** The shared oracle's counts of every basket so far in {@code h}. */
  private ExactCounts counts(HorizonSpec h) {
    if (countedBaskets.getOrDefault(h, -1) != baskets.size()) {
      ExactCounts exact = new ExactCounts(List.of(h));
      for (Basket basket : baskets) {
        exact.add(basket.eventMillis(), basket.items());
      }
      counted.put(h, exact);
      countedBaskets.put(h, baskets.size());
    }
    return counted.get(h);
  }

  double baskets(HorizonSpec h) {
    return counts(h).baskets(h.name());
  }

  Map<String, Double> itemCounts(HorizonSpec h) {
    return counts(h).itemCountsByName(h.name());
  }

  /** Pair counts keyed "a|b" with a < b. */
  Map<String, Double> pairCounts(HorizonSpec h) {
    return counts(h).pairCountsByName(h.name());
  }

  /**
   * Pair rank weights keyed "a|b" under the fractional ranking: each item of a basket of k distinct items spreads one
   * unit over its k − 1 partners, so a pair occurrence weighs 1/(k − 1) (Newman 2001's collaboration weight), times the
   * basket's weight in {@code h}. For baskets under the pair cap.
   */
  Map<String, Double> pairRanks(HorizonSpec h) {
    Map<String, Double> ranks = new HashMap<>();
    for (Basket b : baskets) {
      double w = weight(h, b.eventMillis);
      List<String> items = b.items;
      double share = items.size() > 2 ? w / (items.size() - 1) : w;
      for (int i = 0; w > 0 && i < items.size(); i++) {
        for (int j = i + 1; j < items.size(); j++) {
          ranks.merge(items.get(i) + "|" + items.get(j), share, Double::sum);
        }
      }
    }
    return ranks;
  }

  static String[] split(String pairKey) {
    return ExactCounts.splitPairName(pairKey);
  }

  /**
   * E = Σ_c ρ_c·n_a,c·n_b,c / N_c, ρ_c = N_c·Σk(k − 1) / (Σk)² over each class's baskets, over the size classes that
   * hold pairs, recomputed from every basket (the class of a basket is that of its number k of distinct items):
   * returns a function of the pair.
   */
  java.util.function.ToDoubleBiFunction<String, String> stratifiedExpected(HorizonSpec h,
      org.pairpulse.sketch.stats.SizeClasses classes) {
    ClassSums sums = classSums(h, classes, Integer.MAX_VALUE);
    return (a, b) -> {
      double sum = 0;
      for (int c = 0; c < classes.count(); c++) {
        sum += sums.expected(c, a, b);
      }
      return sum;
    };
  }

  /**
   * The pair count's dispersion φ = Σ_c d_c·E_c / Σ_c E_c, d_c = Σ w·k(k − 1)·s / Σ w·k(k − 1) over each class's
   * baskets, s = ⌈k(k − 1)/2 / cap⌉ when a basket's pairs exceed the cap {@code maxPairsPerBasket} (else 1), E_c the
   * class terms of {@link #stratifiedExpected}: recomputed from every basket, returns a function of the pair.
   */
  java.util.function.ToDoubleBiFunction<String, String> pairCountDispersion(HorizonSpec h,
      org.pairpulse.sketch.stats.SizeClasses classes, int maxPairsPerBasket) {
    ClassSums sums = classSums(h, classes, maxPairsPerBasket);
    return (a, b) -> {
      double expected = 0;
      double stepped = 0;
      for (int c = 0; c < classes.count(); c++) {
        double term = sums.expected(c, a, b);
        expected += term;
        stepped += term == 0 ? 0 : term * sums.steppedSlots[c] / sums.pairSlots[c];
      }
      return expected > 0 ? Math.max(1.0, stepped / expected) : 1.0;
    };
  }

  /** Per size class, over every basket weighed in {@code h}: N_c, Σk, Σk(k − 1), Σk(k − 1)·s and each item's n_a,c. */
  private ClassSums classSums(HorizonSpec h, org.pairpulse.sketch.stats.SizeClasses classes, int maxPairsPerBasket) {
    int count = classes.count();
    ClassSums sums = new ClassSums(classes, new double[count], new double[count], new double[count], new double[count],
        new HashMap<>());
    for (Basket basket : baskets) {
      double w = weight(h, basket.eventMillis);
      int k = basket.items.size();
      long pairs = (long) k * (k - 1) / 2;
      long step = pairs <= maxPairsPerBasket ? 1 : (pairs + maxPairsPerBasket - 1) / maxPairsPerBasket;
      int c = classes.classOf(k);
      sums.n[c] += w;
      sums.slots[c] += w * k;
      sums.pairSlots[c] += w * k * (k - 1.0);
      sums.steppedSlots[c] += w * k * (k - 1.0) * step;
      for (String item : basket.items) {
        sums.byItem.computeIfAbsent(item, key -> new double[count])[c] += w;
      }
    }
    return sums;
  }

  private record ClassSums(org.pairpulse.sketch.stats.SizeClasses classes, double[] n, double[] slots,
      double[] pairSlots, double[] steppedSlots, Map<String, double[]> byItem) {
    /** E_c of the pair {a, b}: ρ_c·n_a,c·n_b,c / N_c, 0 in a class without pairs. */
    double expected(int c, String a, String b) {
      if (!(n[c] > 0 && pairSlots[c] > 0) || classes.pairless(c)) {
        return 0;
      }
      double[] none = new double[n.length];
      double rho = n[c] * pairSlots[c] / (slots[c] * slots[c]);
      return rho * byItem.getOrDefault(a, none)[c] * byItem.getOrDefault(b, none)[c] / n[c];
    }
  }
}
