package org.pairpulse.ops.tools.bench;

import org.pairpulse.sketch.fixtures.BasketSizes;
import org.pairpulse.sketch.fixtures.BasketStream;

/**
 * The pre-generated basket stream of the throughput benchmark (a shared {@link BasketStream}): Zipf item
 * popularity over a catalog, 1 to 8 distinct items per basket (1 + Binomial(7, 3/7): mean 4), event times spread evenly over
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
    BasketStream source = BasketStream.builder(seed).zipf(Catalog.names(catalogItems), ZIPF_EXPONENT)
        .sizes(BasketSizes.binomial(1, MAX_ITEMS - 1, 3, 7)).build();
    String[][] baskets = new String[basketCount][];
    long[] times = new long[basketCount];
    int[] pairs = new int[basketCount];
    int[] ids = new int[source.maxBasketItems()];
    for (int b = 0; b < basketCount; b++) {
      int filled = source.next(0L, ids);
      String[] basket = new String[filled]; // only the baskets are allocated: they lie together in memory
      for (int i = 0; i < filled; i++) {
        basket[i] = source.name(ids[i]);
      }
      baskets[b] = basket;
      times[b] = START_MILLIS + (long) ((double) b * spanMillis / basketCount);
      pairs[b] = basket.length * (basket.length - 1) / 2;
    }
    return new ThroughputStream(baskets, times, pairs, spanMillis);
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
