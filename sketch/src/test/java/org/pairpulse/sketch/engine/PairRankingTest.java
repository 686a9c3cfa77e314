package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * What the fractional pair ranking is for: large baskets hold many pairs, and under counting their pairs crowd the
 * tracked table, so pairs of small baskets that occur far more often per basket are never tracked. The stream: 2,000
 * large baskets of 30 items from a pool of 60 (1,770 pairs, each in about a quarter of them: about 490 times, 17 in rank
 * weight) and 200 pairs of disjoint items each bought as a basket of two 100 times (100 in count and rank), mixed in a
 * seeded order. With capacity 1,024 the count ranking cannot keep the small pairs (the 1,770 large-basket pairs outweigh
 * them); the fractional ranking must keep all 200, and each ranking keeps its own Space-Saving guarantee (checked
 * against the exact oracle in {@link EngineOracleTest}).
 */
class PairRankingTest {
  private static final long START = 1_700_000_000_000L;

  @Test
  void fractionalRankingKeepsThePairsOfSmallBasketsThatLargeBasketsCrowdOut() {
    List<String[]> baskets = stream();
    int fractional = smallPairsTracked(PairRanking.FRACTIONAL, baskets);
    int count = smallPairsTracked(PairRanking.COUNT, baskets);
    assertEquals(200, fractional, "every small-basket pair tracked under the fractional ranking");
    assertTrue(count < 100, "under counting the large baskets' pairs crowd them out: " + count + " of 200 tracked");
  }

  @Test
  void rankingChangesWhatIsTrackedNotWhatIsCounted() {
    List<String[]> baskets = stream().subList(0, 600); // few enough pairs that nothing is evicted
    PairEngine fractional = run(PairRanking.FRACTIONAL, baskets, 1 << 16);
    PairEngine count = run(PairRanking.COUNT, baskets, 1 << 16);
    assertEquals(0, fractional.pairs.evictions + count.pairs.evictions, "no eviction: both count exactly");
    for (String[] basket : baskets.subList(0, 50)) {
      for (String horizon : List.of("recent", "day")) {
        assertEquals(count.pairCount(basket[0], basket[1], horizon), fractional.pairCount(basket[0], basket[1], horizon));
      }
    }
    // a pair of the large baskets occurs only in baskets of 30 items: its fractional rank is its count rank / 29
    String[] large = baskets.stream().filter(basket -> basket.length == 30).findFirst().orElseThrow();
    long key = org.pairpulse.sketch.hash.ItemHash.pairKey(org.pairpulse.sketch.hash.ItemHash.of(large[0]),
        org.pairpulse.sketch.hash.ItemHash.of(large[1]));
    double countRank = count.pairs.rank(count.pairs.find(key));
    assertEquals(countRank / 29, fractional.pairs.rank(fractional.pairs.find(key)), 1e-9 * countRank);
    // a pair of two-item baskets ranks the same either way
    String[] small = baskets.stream().filter(basket -> basket.length == 2).findFirst().orElseThrow();
    long smallKey = org.pairpulse.sketch.hash.ItemHash.pairKey(org.pairpulse.sketch.hash.ItemHash.of(small[0]),
        org.pairpulse.sketch.hash.ItemHash.of(small[1]));
    assertEquals(count.pairs.rank(count.pairs.find(smallKey)), fractional.pairs.rank(fractional.pairs.find(smallKey)));
  }

  @Test
  void factorIsOneOverPartnersAndOneForCounting() {
    assertEquals(1.0, PairRanking.FRACTIONAL.factor(2));
    assertEquals(0.5, PairRanking.FRACTIONAL.factor(3));
    assertEquals(1.0 / 29, PairRanking.FRACTIONAL.factor(30), 1e-15);
    assertEquals(1.0, PairRanking.COUNT.factor(30));
    assertEquals(PairRanking.COUNT, PairRanking.parse(" Count "));
  }

  private static int smallPairsTracked(PairRanking ranking, List<String[]> baskets) {
    PairEngine engine = run(ranking, baskets, 1_024);
    int tracked = 0;
    for (int p = 0; p < 200; p++) {
      if (engine.isTracked("solo-a" + p, "solo-b" + p)) {
        tracked++;
      }
    }
    return tracked;
  }

  private static PairEngine run(PairRanking ranking, List<String[]> baskets, int capacity) {
    EngineConfig config = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("recent", Duration.ofDays(30)), HorizonSpec.window("day", Duration.ofDays(1), 4)))
        .trackingHorizon("recent").trackedPairCapacity(capacity).trackedItemCapacity(1_024).pairError(0.002, 0.02)
        .pairRanking(ranking).build();
    PairEngine engine = new PairEngine(config);
    for (int i = 0; i < baskets.size(); i++) {
      engine.addBasket(START + i * 1_000L, baskets.get(i));
    }
    return engine;
  }

  /** 2,000 large baskets and 200 × 100 baskets of two, in a seeded order. */
  private static List<String[]> stream() {
    Random random = new Random(7);
    List<String[]> baskets = new ArrayList<>();
    List<String> pool = new ArrayList<>();
    for (int i = 0; i < 60; i++) {
      pool.add("popular-" + i);
    }
    for (int b = 0; b < 2_000; b++) {
      Collections.shuffle(pool, random);
      baskets.add(pool.subList(0, 30).toArray(new String[0]));
    }
    for (int p = 0; p < 200; p++) {
      for (int r = 0; r < 100; r++) {
        baskets.add(new String[] {"solo-a" + p, "solo-b" + p});
      }
    }
    Collections.shuffle(baskets, random);
    return baskets;
  }
}
