package org.pairpulse.ops.tools.bench;

import com.carrotsearch.hppc.LongIntHashMap;
import java.time.Duration;
import java.util.Locale;
import java.util.SplittableRandom;
import org.pairpulse.sketch.fixtures.BasketSizes;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ExactCounts;

/**
 * The seeded basket stream of the accuracy phase: Zipf background items mixed with planted associated
 * pairs, spread evenly over {@code days} of event time. The workload (which pairs, which rates, when) is defined
 * here; the baskets come from the shared {@link BasketStream} (one plant per basket).
 *
 * <h2>One basket</h2>
 * <ol>
 *   <li>Size b uniform in 2..6 (E[b(b−1)/2] = 7 pair occurrences per basket), so there are
 *       {@code pairOccurrences / 7} baskets.</li>
 *   <li>With probability Q (the summed rate of the planted pairs active at the basket's time) the basket
 *       holds one planted pair, chosen in proportion to the pairs' rates.</li>
 *   <li>The other items are Zipf draws over the catalog (exponent {@code zipfExponent}), distinct.</li>
 * </ol>
 *
 * <h2>Planted pairs</h2>
 * Each planted pair joins two distinct items whose ranks are log-uniform in [10, catalog) (so their
 * background popularity varies over three orders of magnitude) and has a rate (per-basket probability)
 * log-uniform in [{@value #PLANTED_RATE_MIN}, {@value #PLANTED_RATE_MAX}]: about half of them sit above a
 * support floor of 0.001, and their lifts form a continuum, with no gap at any rank. A share
 * {@code driftingShare} of them drifts, half each way:
 * <ul>
 *   <li>fading: active only in the first {@value #FADING_END} of the span (they end a week before the end
 *       of a 28-day stream);</li>
 *   <li>emerging: active only in the last {@code 1 − }{@value #EMERGING_START} of the span, at
 *       {@value #EMERGING_BOOST} times their rate.</li>
 * </ul>
 * The rest are stationary. Time starts at 2026-01-01T00:00Z, a whole day, so a 28-day stream fills
 * exactly the 28 daily panes of the default {@code baseline} window.
 *
 * <p>Not thread-safe; one pass per instance.
 */
final class AccuracyStream {
  static final double PLANTED_RATE_MIN = 0.0002;
  static final double PLANTED_RATE_MAX = 0.003;
  static final double FADING_END = 0.75;
  static final double EMERGING_START = 0.9;
  static final double EMERGING_BOOST = 3.0;
  static final int MIN_ITEMS = 2;
  static final int MAX_ITEMS = 6;
  static final double MEAN_PAIRS_PER_BASKET = 7.0; // (1 + 3 + 6 + 10 + 15) / 5
  static final long START_MILLIS = ThroughputStream.START_MILLIS;

  /** Which association a pair was given. */
  enum Kind {
    BACKGROUND, STATIONARY, FADING, EMERGING;

    String label() {
      return name().toLowerCase(Locale.ROOT);
    }
  }

  /**
   * What to generate.
   *
   * @param seed the random seed: equal workloads give equal streams
   * @param catalogItems items in the catalog
   * @param pairOccurrences about how many pair occurrences the stream holds
   * @param days event-time span
   * @param zipfExponent background popularity exponent
   * @param plantedPairs number of planted associated pairs
   * @param driftingShare share of planted pairs that fade or emerge (half each)
   */
  record Workload(long seed, int catalogItems, long pairOccurrences, int days, double zipfExponent, int plantedPairs,
      double driftingShare) {
    Workload {
      if (catalogItems < 20) {
        throw new IllegalArgumentException("the accuracy catalog needs at least 20 items, got " + catalogItems);
      }
      if (pairOccurrences < 1000) {
        throw new IllegalArgumentException("the accuracy stream needs at least 1000 pair occurrences, got " + pairOccurrences);
      }
      if (days < 1) {
        throw new IllegalArgumentException("days must be >= 1, got " + days);
      }
      if (plantedPairs < 0 || (long) plantedPairs * 4 > (long) catalogItems * catalogItems) {
        throw new IllegalArgumentException("planted pairs must be in 0.." + ((long) catalogItems * catalogItems / 4)
            + " for a catalog of " + catalogItems + ", got " + plantedPairs);
      }
      if (!(driftingShare >= 0 && driftingShare <= 1)) {
        throw new IllegalArgumentException("drifting share must be in [0, 1], got " + driftingShare);
      }
    }

    long basketCount() {
      return Math.max(1, Math.round(pairOccurrences / MEAN_PAIRS_PER_BASKET));
    }

    long spanMillis() {
      return Duration.ofDays(days).toMillis();
    }
  }

  private final Workload workload;
  private final int[] plantedA;
  private final int[] plantedB;
  private final Kind[] plantedKind;
  private final LongIntHashMap plantedIndex = new LongIntHashMap();
  private final BasketStream baskets;
  private final long basketCount;
  private final long spanMillis;
  private long next;
  private long eventMillis;

  AccuracyStream(Workload workload) {
    this.workload = workload;
    SplittableRandom random = new SplittableRandom(workload.seed());
    this.basketCount = workload.basketCount();
    this.spanMillis = workload.spanMillis();
    String[] names = Catalog.names(workload.catalogItems());
    BasketStream.Builder builder = BasketStream.builder(random).zipf(names, workload.zipfExponent())
        .sizes(BasketSizes.uniform(MIN_ITEMS, MAX_ITEMS)).maxSize(MAX_ITEMS).onePlantPerBasket();
    // a phase starts with the first basket whose position in the stream reaches its share
    long fadingEndMillis = eventMillisAt(firstBasketAt(FADING_END));
    long emergingStartMillis = eventMillisAt(firstBasketAt(EMERGING_START));
    int planted = workload.plantedPairs();
    plantedA = new int[planted];
    plantedB = new int[planted];
    plantedKind = new Kind[planted];
    int drifting = (int) Math.round(planted * workload.driftingShare());
    double lowRank = Math.log(10);
    double highRank = Math.log(workload.catalogItems());
    for (int p = 0; p < planted; p++) {
      int a;
      int b;
      do {
        a = (int) Math.min(workload.catalogItems() - 1, Math.floor(Math.exp(lowRank + random.nextDouble() * (highRank - lowRank))));
        b = (int) Math.min(workload.catalogItems() - 1, Math.floor(Math.exp(lowRank + random.nextDouble() * (highRank - lowRank))));
      } while (a == b || plantedIndex.containsKey(ExactCounts.pairKey(a, b)));
      plantedA[p] = a;
      plantedB[p] = b;
      plantedIndex.put(ExactCounts.pairKey(a, b), p);
      double rate = PLANTED_RATE_MIN * Math.pow(PLANTED_RATE_MAX / PLANTED_RATE_MIN, random.nextDouble());
      plantedKind[p] = p < drifting / 2 ? Kind.FADING : p < drifting ? Kind.EMERGING : Kind.STATIONARY;
      builder.plant(switch (plantedKind[p]) {
        case FADING -> new BasketStream.Plant(names[a], names[b], rate, Long.MIN_VALUE, fadingEndMillis);
        case EMERGING -> new BasketStream.Plant(names[a], names[b], rate * EMERGING_BOOST, emergingStartMillis,
            Long.MAX_VALUE);
        default -> BasketStream.Plant.steady(names[a], names[b], rate);
      });
    }
    this.baskets = builder.build();
  }

  /** The index of the first basket whose position {@code index / basketCount} is at least {@code share}. */
  private long firstBasketAt(double share) {
    long index = Math.max(0, (long) Math.floor(share * basketCount) - 1);
    while ((double) index / basketCount < share) {
      index++;
    }
    return index;
  }

  private long eventMillisAt(long index) {
    return START_MILLIS + (long) ((double) index / basketCount * spanMillis);
  }

  Workload workload() {
    return workload;
  }

  long basketCount() {
    return basketCount;
  }

  /** How the pair {a, b} was generated. */
  Kind kindOf(int a, int b) {
    int p = plantedIndex.getOrDefault(ExactCounts.pairKey(a, b), -1);
    return p < 0 ? Kind.BACKGROUND : plantedKind[p];
  }

  boolean hasNext() {
    return next < basketCount;
  }

  /** Event time of the basket {@link #next} returned last. */
  long eventMillis() {
    return eventMillis;
  }

  /** Writes the next basket's distinct item ids into {@code items} (length ≥ 6) and returns how many. */
  int next(int[] items) {
    eventMillis = eventMillisAt(next++);
    return baskets.next(eventMillis, items);
  }
}
