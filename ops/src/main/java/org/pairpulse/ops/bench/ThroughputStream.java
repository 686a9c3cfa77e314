package org.pairpulse.ops.bench;

import java.util.SplittableRandom;

/**
 * The pre-generated basket stream of the throughput benchmark: Zipf item popularity over a catalog, 1 to
 * 8 distinct items per basket (1 + Binomial(7, 3/7): mean 4), event times spread evenly over
 * {@code spanMillis} so that panes roll and the decay moves its landmark. A benchmark replays it in laps,
 * adding {@code spanMillis} to the times on every lap, so event time only moves forward.
 */
final class ThroughputStream {
  /** Catalog popularity exponent of the throughput stream (the classic Zipf law). */
  static final double ZIPF_EXPONENT = 1.0;
  static final int MAX_ITEMS = 8;
  /** 2026-01-01T00:00Z: whole days, hours and half-lives start here. */
  static final long START_MILLIS = 1_767_225_600_000L;

  final String[][] baskets;
  final long[] eventMillis;
  final int[] pairsOfBasket;
  final long spanMillis;

  private ThroughputStream(String[][] baskets, long[] eventMillis, int[] pairsOfBasket, long spanMillis) {
    this.baskets = baskets;
    this.eventMillis = eventMillis;
    this.pairsOfBasket = pairsOfBasket;
    this.spanMillis = spanMillis;
  }

  static ThroughputStream generate(long seed, int catalogItems, int basketCount, long spanMillis) {
    if (basketCount < 1) {
      throw new IllegalArgumentException("the throughput stream needs at least one basket, got " + basketCount);
    }
    if (catalogItems < MAX_ITEMS) {
      throw new IllegalArgumentException("catalog must hold at least " + MAX_ITEMS + " items, got " + catalogItems);
    }
    SplittableRandom random = new SplittableRandom(seed);
    ZipfSampler zipf = new ZipfSampler(catalogItems, ZIPF_EXPONENT);
    String[] names = Catalog.names(catalogItems);
    String[][] baskets = new String[basketCount][];
    long[] times = new long[basketCount];
    int[] pairs = new int[basketCount];
    int[] ids = new int[MAX_ITEMS];
    for (int b = 0; b < basketCount; b++) {
      int size = 1;
      for (int trial = 0; trial < MAX_ITEMS - 1; trial++) {
        if (random.nextInt(7) < 3) {
          size++;
        }
      }
      int filled = fillDistinct(random, zipf, ids, 0, size);
      String[] basket = new String[filled];
      for (int i = 0; i < filled; i++) {
        basket[i] = names[ids[i]];
      }
      baskets[b] = basket;
      times[b] = START_MILLIS + (long) ((double) b * spanMillis / basketCount);
      pairs[b] = filled * (filled - 1) / 2;
    }
    return new ThroughputStream(baskets, times, pairs, spanMillis);
  }

  /** Fills {@code ids[from..size)} with Zipf items distinct from each other and from {@code ids[0..from)}. */
  static int fillDistinct(SplittableRandom random, ZipfSampler zipf, int[] ids, int from, int size) {
    int filled = from;
    while (filled < size) {
      int candidate = zipf.sample(random);
      boolean seen = false;
      for (int i = 0; i < filled; i++) {
        if (ids[i] == candidate) {
          seen = true;
          break;
        }
      }
      if (!seen) {
        ids[filled++] = candidate;
      }
    }
    return filled;
  }

  int size() {
    return baskets.length;
  }

  double meanItems() {
    long items = 0;
    for (String[] basket : baskets) {
      items += basket.length;
    }
    return (double) items / baskets.length;
  }

  double meanPairs() {
    long pairs = 0;
    for (int p : pairsOfBasket) {
      pairs += p;
    }
    return (double) pairs / baskets.length;
  }
}
