package org.pairpulse.sketch.table;

import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;

/**
 * The statistics of one tracked pair in one horizon, as published by a refresh.
 *
 * @param itemA one item of the pair (the pair is unordered; rules read a ⇒ b and b ⇒ a)
 * @param itemB the other item
 * @param horizon the horizon's name
 * @param counts N, n_a, n_b, n_ab with bounds, in basket units as of the table's watermark
 * @param measures support, confidence, lift and the rest
 * @param trackedSinceMillis event time at which the pair entered the tracked table
 */
public record PairStats(String itemA, String itemB, String horizon, PairCounts counts, PairMeasures measures,
    long trackedSinceMillis) {

  /** The pair's other item, given one of its items. */
  public String other(String item) {
    if (item.equals(itemA)) {
      return itemB;
    }
    if (item.equals(itemB)) {
      return itemA;
    }
    throw new IllegalArgumentException("'" + item + "' is not in pair {" + itemA + ", " + itemB + "}");
  }

  /** True when {@code item} is one of the pair's two items. */
  public boolean contains(String item) {
    return item.equals(itemA) || item.equals(itemB);
  }
}
