package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;

/**
 * Seeded test streams: Zipf item popularity (exponent about 1, sampled by inversion of the cumulative
 * weights) with planted associations: with some probability a basket that holds a planted pair's first
 * item also gets its second.
 */
final class Streams {
  private final SplittableRandom random;
  private final double[] cumulative;
  private final int catalog;

  Streams(long seed, int catalog, double exponent) {
    this.random = new SplittableRandom(seed);
    this.catalog = catalog;
    this.cumulative = new double[catalog];
    double sum = 0;
    for (int i = 0; i < catalog; i++) {
      sum += 1.0 / Math.pow(i + 1, exponent);
      cumulative[i] = sum;
    }
    for (int i = 0; i < catalog; i++) {
      cumulative[i] /= sum;
    }
  }

  String zipfItem() {
    double u = random.nextDouble();
    int lo = 0;
    int hi = catalog - 1;
    while (lo < hi) {
      int mid = (lo + hi) >>> 1;
      if (cumulative[mid] < u) {
        lo = mid + 1;
      } else {
        hi = mid;
      }
    }
    return "item-" + lo;
  }

  /** A basket of 1..maxItems Zipf items; planted pairs (i, i+catalog/2 for i < planted) with probability 0.6. */
  String[] basket(int maxItems, int planted) {
    int size = 1 + random.nextInt(maxItems);
    Set<String> items = new LinkedHashSet<>();
    for (int i = 0; i < size; i++) {
      items.add(zipfItem());
    }
    List<String> extra = new ArrayList<>();
    for (String item : items) {
      int id = Integer.parseInt(item.substring(5));
      if (id < planted && random.nextDouble() < 0.6) {
        extra.add("item-" + (id + catalog / 2));
      }
    }
    items.addAll(extra);
    return items.toArray(new String[0]);
  }

  long nextLong(long bound) {
    return random.nextLong(bound);
  }

  double nextDouble() {
    return random.nextDouble();
  }
}
