package org.pairpulse.sketch.bench;

import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.ZipfDistribution;
import org.apache.commons.math3.random.Well19937c;

/**
 * The pre-generated basket stream of {@link PairEngineBenchmark}: Zipf item popularity (exponent
 * {@value #ZIPF_EXPONENT}) over a catalog of items {@code "i<rank>"}, 1 to {@value #MAX_ITEMS} distinct items per
 * basket (1 + Binomial(7, 3/7): mean 4), event times spread evenly over {@code spanMillis} from
 * {@link #START_MILLIS}, so that panes roll and the decay moves its landmark. The benchmark replays it in laps,
 * adding {@code spanMillis} to the times on every lap, so event time only moves forward.
 *
 * <p>Item draws: Commons Math's {@link ZipfDistribution} (rejection-inversion sampling, Hörmann and Derflinger,
 * "Rejection-inversion to generate variates from monotone discrete distributions", ACM TOMACS 1996) on a
 * {@link Well19937c} seeded with the stream's seed; basket sizes from a {@link SplittableRandom} with the same seed.
 */
public final class EngineStream {
  /** Catalog popularity exponent (the classic Zipf law). */
  public static final double ZIPF_EXPONENT = 1.0;
  public static final int MAX_ITEMS = 8;
  /** 2026-01-01T00:00Z: whole days, hours and half-lives start here. */
  public static final long START_MILLIS = 1_767_225_600_000L;

  final String[][] baskets;
  final long[] eventMillis;
  final int[] pairsOfBasket;
  final long spanMillis;

  private EngineStream(String[][] baskets, long[] eventMillis, int[] pairsOfBasket, long spanMillis) {
    this.baskets = baskets;
    this.eventMillis = eventMillis;
    this.pairsOfBasket = pairsOfBasket;
    this.spanMillis = spanMillis;
  }

  /**
   * {@code basketCount} baskets over {@code catalogItems} items in {@code spanMillis} of event time.
   *
   * @throws IllegalArgumentException when there is no basket or the catalog is smaller than {@value #MAX_ITEMS}
   */
  public static EngineStream generate(long seed, int catalogItems, int basketCount, long spanMillis) {
    if (basketCount < 1) {
      throw new IllegalArgumentException("the engine stream needs at least one basket, got " + basketCount);
    }
    if (catalogItems < MAX_ITEMS) {
      throw new IllegalArgumentException("catalog must hold at least " + MAX_ITEMS + " items, got " + catalogItems);
    }
    SplittableRandom sizes = new SplittableRandom(seed);
    ZipfDistribution zipf = new ZipfDistribution(new Well19937c(seed), catalogItems, ZIPF_EXPONENT);
    String[] names = new String[catalogItems];
    for (int rank = 0; rank < catalogItems; rank++) {
      names[rank] = "i" + rank;
    }
    String[][] baskets = new String[basketCount][];
    long[] times = new long[basketCount];
    int[] pairs = new int[basketCount];
    int[] ranks = new int[MAX_ITEMS];
    for (int b = 0; b < basketCount; b++) {
      int size = 1;
      for (int trial = 0; trial < MAX_ITEMS - 1; trial++) {
        size += sizes.nextInt(7) < 3 ? 1 : 0;
      }
      int filled = 0;
      while (filled < size) {
        int rank = zipf.sample() - 1; // 1-based
        boolean fresh = true;
        for (int i = 0; i < filled && fresh; i++) {
          fresh = ranks[i] != rank;
        }
        if (fresh) {
          ranks[filled++] = rank;
        }
      }
      String[] basket = new String[size];
      for (int i = 0; i < size; i++) {
        basket[i] = names[ranks[i]];
      }
      baskets[b] = basket;
      times[b] = START_MILLIS + (long) ((double) b * spanMillis / basketCount);
      pairs[b] = size * (size - 1) / 2;
    }
    return new EngineStream(baskets, times, pairs, spanMillis);
  }

  /** Baskets in one lap. */
  public int size() {
    return baskets.length;
  }

  /** Mean distinct items per basket. */
  public double meanItems() {
    long items = 0;
    for (String[] basket : baskets) {
      items += basket.length;
    }
    return (double) items / baskets.length;
  }

  /** Mean pairs b(b−1)/2 per basket. */
  public double meanPairs() {
    long sum = 0;
    for (int p : pairsOfBasket) {
      sum += p;
    }
    return (double) sum / baskets.length;
  }
}
