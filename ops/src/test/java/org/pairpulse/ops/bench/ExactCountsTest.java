package org.pairpulse.ops.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.carrotsearch.hppc.LongDoubleHashMap;
import com.carrotsearch.hppc.cursors.LongDoubleCursor;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The benchmark's oracle is tested like any other code: against a slow, obvious recomputation with
 * {@link HashMap}s from the full list of baskets, on a seeded stream with late and expired baskets,
 * duplicates, empty baskets and enough half-lives to force several landmark moves.
 */
class ExactCountsTest {
  static final HorizonSpec WINDOW = HorizonSpec.window("w", Duration.ofSeconds(10), 5);
  static final HorizonSpec ONE_PANE = HorizonSpec.window("one", Duration.ofSeconds(3), 1);
  static final HorizonSpec DECAY = HorizonSpec.decay("d", Duration.ofSeconds(3));
  static final List<HorizonSpec> HORIZONS = List.of(DECAY, WINDOW, ONE_PANE);
  static final int ITEMS = 25;

  /** One basket as generated (raw items, duplicates included). */
  record Basket(long eventMillis, int[] items) {
    Set<Integer> distinct() {
      Set<Integer> set = new LinkedHashSet<>();
      for (int item : items) {
        set.add(item);
      }
      return set;
    }
  }

  static List<Basket> stream(long seed, int count) {
    SplittableRandom random = new SplittableRandom(seed);
    List<Basket> baskets = new ArrayList<>();
    long now = 1_000_000L;
    for (int b = 0; b < count; b++) {
      now += random.nextInt(400);
      // about 10% late, by up to 12 s: some stay in their pane's window, some have left it
      long eventMillis = random.nextInt(10) == 0 ? now - random.nextInt(12_000) : now;
      int size = random.nextInt(7); // 0..6 items, empty baskets included
      int[] items = new int[size];
      for (int i = 0; i < size; i++) {
        items[i] = random.nextInt(ITEMS); // duplicates happen
      }
      baskets.add(new Basket(eventMillis, items));
    }
    return baskets;
  }

  /** The slow recomputation: every count from the whole list, as of the final watermark. */
  static final class Recomputed {
    double baskets;
    final Map<Long, Double> items = new HashMap<>();
    final Map<Long, Double> pairs = new HashMap<>();

    Recomputed(List<Basket> stream, HorizonSpec spec) {
      long watermark = Long.MIN_VALUE;
      long newestPane = Long.MIN_VALUE;
      for (Basket basket : stream) {
        if (!basket.distinct().isEmpty()) {
          watermark = Math.max(watermark, basket.eventMillis());
          if (spec.isWindow()) {
            newestPane = Math.max(newestPane, Math.floorDiv(basket.eventMillis(), spec.paneMillis()));
          }
        }
      }
      for (Basket basket : stream) {
        List<Integer> present = new ArrayList<>(basket.distinct());
        if (present.isEmpty()) {
          continue;
        }
        double weight;
        if (spec.isWindow()) {
          long pane = Math.floorDiv(basket.eventMillis(), spec.paneMillis());
          // a pane that left the window before the end would have left by the end too
          weight = pane >= newestPane - spec.paneCount() + 1 ? 1.0 : 0.0;
        } else {
          weight = Math.pow(2.0, (double) (basket.eventMillis() - watermark) / spec.halfLifeMillis());
        }
        if (weight == 0) {
          continue;
        }
        baskets += weight;
        for (int i = 0; i < present.size(); i++) {
          items.merge((long) present.get(i), weight, Double::sum);
          for (int j = i + 1; j < present.size(); j++) {
            pairs.merge(ExactCounts.pairKey(present.get(i), present.get(j)), weight, Double::sum);
          }
        }
      }
    }
  }

  static ExactCounts feed(List<Basket> stream) {
    ExactCounts exact = new ExactCounts(HORIZONS);
    for (Basket basket : stream) {
      exact.addBasket(basket.eventMillis(), basket.items(), basket.items().length);
    }
    return exact;
  }

  static void assertClose(double expected, double actual, String what) {
    double tolerance = 1e-9 * Math.max(1.0, Math.abs(expected));
    assertEquals(expected, actual, tolerance, what);
  }

  static void assertSameCounts(Map<Long, Double> expected, LongDoubleHashMap actual, String what) {
    int nonZero = 0;
    for (LongDoubleCursor entry : actual) {
      if (entry.value != 0) {
        nonZero++;
      }
      assertClose(expected.getOrDefault(entry.key, 0.0), entry.value, what + " key " + entry.key);
    }
    assertEquals(expected.size(), nonZero, what + ": number of keys");
  }

  @Test
  void agreesWithAPlainHashMapRecomputation() {
    List<Basket> stream = stream(7, 4000); // ~800 s of event time: ~270 half-lives, several landmark moves
    ExactCounts exact = feed(stream);
    for (HorizonSpec spec : HORIZONS) {
      Recomputed expected = new Recomputed(stream, spec);
      String h = spec.name();
      assertTrue(expected.baskets > 0, h);
      assertClose(expected.baskets, exact.baskets(h), h + " N");
      assertSameCounts(expected.items, exact.itemCounts(h), h + " items");
      assertSameCounts(expected.pairs, exact.pairCounts(h), h + " pairs");
      for (int a = 0; a < ITEMS; a++) {
        assertClose(expected.items.getOrDefault((long) a, 0.0), exact.itemCount(h, a), h + " item " + a);
        for (int b = a + 1; b < ITEMS; b++) {
          double pair = expected.pairs.getOrDefault(ExactCounts.pairKey(a, b), 0.0);
          assertClose(pair, exact.pairCount(h, a, b), h + " pair " + a + "," + b);
          assertClose(pair, exact.pairCount(h, b, a), h + " pair " + b + "," + a + " (order-free)");
        }
      }
    }
  }

  @Test
  void matchesTheEngineWhenTheEngineTracksEveryPair() {
    // with room for every item and pair, PairEngine's counts are exact: same semantics, same numbers
    EngineConfig config = EngineConfig.builder().horizons(HORIZONS).trackingHorizon(DECAY.name())
        .trackedPairCapacity(1024).trackedItemCapacity(64).build();
    PairEngine engine = new PairEngine(config);
    List<Basket> stream = stream(11, 3000);
    ExactCounts exact = new ExactCounts(HORIZONS);
    for (Basket basket : stream) {
      String[] names = new String[basket.items().length];
      for (int i = 0; i < names.length; i++) {
        names[i] = "i" + basket.items()[i];
      }
      engine.addBasket(basket.eventMillis(), names);
      exact.addBasket(basket.eventMillis(), basket.items(), basket.items().length);
    }
    assertEquals(engine.watermarkMillis(), exact.watermarkMillis());
    for (HorizonSpec spec : HORIZONS) {
      String h = spec.name();
      assertClose(exact.baskets(h), engine.basketCount(h), h + " N");
      for (int a = 0; a < ITEMS; a++) {
        assertClose(exact.itemCount(h, a), engine.itemCount("i" + a, h).value(), h + " item " + a);
        for (int b = a + 1; b < ITEMS; b++) {
          assertClose(exact.pairCount(h, a, b), engine.pairCount("i" + a, "i" + b, h).value(), h + " pair " + a + "," + b);
        }
      }
    }
  }

  @Test
  void pairKeysAreOrderFreeAndReversible() {
    long key = ExactCounts.pairKey(9_999, 3);
    assertEquals(key, ExactCounts.pairKey(3, 9_999));
    assertEquals(3, ExactCounts.lowItem(key));
    assertEquals(9_999, ExactCounts.highItem(key));
    assertEquals(ExactCounts.pairKey(0, Integer.MAX_VALUE), ExactCounts.pairKey(Integer.MAX_VALUE, 0));
    assertEquals(Integer.MAX_VALUE, ExactCounts.highItem(ExactCounts.pairKey(0, Integer.MAX_VALUE)));
  }

  @Test
  void stateBytesCountLivePanesOnly() {
    ExactCounts exact = feed(stream(3, 2000));
    long windowBytes = exact.stateBytes(WINDOW.name());
    assertTrue(windowBytes > 0);
    assertEquals(exact.stateBytes(), exact.stateBytes(DECAY.name()) + windowBytes + exact.stateBytes(ONE_PANE.name()));
    // one basket far in the future: every old pane leaves, the window keeps one small pane
    exact.addBasket(exact.watermarkMillis() + Duration.ofHours(1).toMillis(), new int[] {1, 2}, 2);
    assertTrue(exact.stateBytes(WINDOW.name()) < windowBytes, "panes that left must drop their maps");
    assertEquals(1.0, exact.baskets(WINDOW.name()));
    assertEquals(1.0, exact.pairCount(WINDOW.name(), 2, 1));
  }
}
