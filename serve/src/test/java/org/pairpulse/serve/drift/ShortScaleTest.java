package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.pairpulse.serve.fixtures.InventedStream.T0;

import java.time.Duration;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.InventedStream;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.fixtures.BasketStream.Plant;
import org.pairpulse.sketch.fixtures.BasketStream.Spike;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The short scale derived from successive tables against the slow oracle: the same decay summed basket by basket,
 * Σ 2^(−(t − tᵢ)/s) over what arrived since the pair's counts started, for N, n_a, n_b and n_ab of a planted pair
 * that stops, and of every tracked pair of the stream's busiest item. Baskets arrive evenly, so the derivation's only
 * approximation (the weighting inside one refresh interval, see {@link ShortScale}) is corrected up to the spacing of
 * single baskets.
 */
class ShortScaleTest {
  private static final long MINUTE = Duration.ofMinutes(1).toMillis();
  private static final long HOUR = Duration.ofHours(1).toMillis();
  private static final long SHORT_HALF_LIFE = HOUR;

  /** Event times of the baskets fed so far, with their items. */
  private record Fed(long atMillis, Set<String> items) {}

  @Test
  void matchesTheShortDecaySummedBasketByBasket() {
    long stop = T0 + 6 * HOUR;
    InventedStream stream = new InventedStream(11, 200, EngineConfig.builder().trackedPairCapacity(512).build())
        .spike(new Spike("roam-zoneb", 0.05, T0, T0 + 12 * HOUR))
        .plant(new Plant("roam-zoneb", "guard-travel", 0.06, T0, stop));
    ShortScale scale = new ShortScale(SHORT_HALF_LIFE, "recent");
    List<Fed> fed = new ArrayList<>();
    long start = Long.MIN_VALUE;
    int basketsPerRefresh = 60;
    long refresh = 5 * MINUTE;
    int checks = 0;
    for (long t = T0; t < T0 + 11 * HOUR; t += refresh) {
      for (int i = 0; i < basketsPerRefresh; i++) {
        long at = t + i * refresh / basketsPerRefresh;
        List<String> basket = stream.basket(at);
        stream.engine().addBasket(at, basket);
        fed.add(new Fed(at, new HashSet<>(basket)));
      }
      PairTable table = stream.refresh(t + refresh);
      scale.advance(table);
      long watermark = table.watermarkMillis();
      PairStats pair = table.pair("roam-zoneb", "guard-travel", "recent").orElseThrow();
      if (start == Long.MIN_VALUE) {
        start = watermark; // the monitor's first table: counts start here
        assertEquals(0, scale.ageMillis(pair));
        continue;
      }
      assertEquals(watermark - start, scale.ageMillis(pair));
      PairCounts derived = scale.counts(pair);
      assertNotNull(derived);
      double[] exact = exact(fed, start, watermark, pair.itemA(), pair.itemB());
      assertClose(exact[0], derived.baskets(), "N at " + (watermark - T0) / MINUTE + " min");
      assertClose(exact[1], derived.countA().value(), "n_a");
      assertClose(exact[2], derived.countB().value(), "n_b");
      assertClose(exact[3], derived.countAB().value(), "n_ab");
      checks++;
    }
    assertTrue(checks > 120);
    // the pair stopped 5 hours before the end: its short count fell far below the recent decay's
    PairTable last = stream.refresh(T0 + 12 * HOUR);
    scale.advance(last);
    PairStats pair = last.pair("roam-zoneb", "guard-travel", "recent").orElseThrow();
    double shortRate = scale.counts(pair).countAB().value() / scale.counts(pair).baskets();
    double recentRate = pair.counts().countAB().value() / pair.counts().baskets();
    assertTrue(shortRate < recentRate / 5, shortRate + " against " + recentRate);
  }

  @Test
  void forgetsPairsThatLeaveTheTableAndIgnoresAStandingWatermark() {
    InventedStream stream = new InventedStream(5, 100, EngineConfig.builder().trackedPairCapacity(1024).build())
        .plant(new Plant("device-x1", "case-x1", 0.05, T0, T0 + 2 * HOUR));
    ShortScale scale = new ShortScale(SHORT_HALF_LIFE, "recent");
    stream.feed(T0, T0 + HOUR, 600);
    PairTable first = stream.refresh(T0 + HOUR);
    scale.advance(first);
    stream.feed(T0 + HOUR, T0 + 2 * HOUR, 600);
    PairTable second = stream.refresh(T0 + 2 * HOUR);
    scale.advance(second);
    PairStats pair = second.pair("device-x1", "case-x1", "recent").orElseThrow();
    PairCounts before = scale.counts(pair);
    assertTrue(before.countAB().value() > 0);
    scale.advance(second); // the same table again: nothing moves
    assertEquals(before, scale.counts(pair));
    int held = scale.size();
    assertEquals(second.pairs("recent").size(), held);
    scale.advance(PairTable.empty()); // no recent horizon: nothing moves either
    assertEquals(held, scale.size());
    // a table without the pair: it is forgotten
    InventedStream other = new InventedStream(6, 100, EngineConfig.builder().trackedPairCapacity(1024).build());
    other.feed(T0 + 2 * HOUR, T0 + 3 * HOUR, 600);
    scale.advance(other.refresh(T0 + 3 * HOUR));
    assertNull(scale.counts(pair));
  }

  /** N, n_a, n_b, n_ab of the short decay at {@code atMillis}, over baskets in (fromMillis, atMillis]. */
  private static double[] exact(List<Fed> fed, long fromMillis, long atMillis, String a, String b) {
    double[] sums = new double[4];
    for (Fed basket : fed) {
      if (basket.atMillis() <= fromMillis || basket.atMillis() > atMillis) {
        continue;
      }
      double w = Math.pow(2.0, -(atMillis - basket.atMillis()) / (double) SHORT_HALF_LIFE);
      boolean hasA = basket.items().contains(a);
      boolean hasB = basket.items().contains(b);
      sums[0] += w;
      sums[1] += hasA ? w : 0;
      sums[2] += hasB ? w : 0;
      sums[3] += hasA && hasB ? w : 0;
    }
    return sums;
  }

  /** Within 2 % or 0.5 of a basket: the residue of weighting single baskets inside one refresh interval. */
  private static void assertClose(double expected, double actual, String what) {
    double tolerance = Math.max(0.5, 0.02 * expected);
    assertTrue(Math.abs(expected - actual) <= tolerance, what + ": derived " + actual + ", exact " + expected);
  }
}
