package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.horizon.HorizonSpec;

/** The per-basket pair cap: bounded, unbiased (Horvitz–Thompson), counted, and never touching item counts. */
class PairSamplingTest {
  private static final long T0 = 1_700_000_000_000L;

  @Test
  void eachPairIsKeptWithProbabilityOneOverKAndWeighsK() {
    // For a fixed basket the start r is uniform over [0, k); over all r every pair is kept exactly once.
    PairSampling sampling = new PairSampling(50);
    long total = 30L * 29 / 2; // 435 pairs
    long step = sampling.stepFor(total);
    assertEquals(9, step, "k = ceil(435 / 50)");
    int[] keptTimes = new int[(int) total];
    for (long start = 0; start < step; start++) {
      int kept = 0;
      for (long ordinal = start; ordinal < total; ordinal += step) {
        keptTimes[(int) ordinal]++;
        kept++;
      }
      assertTrue(kept <= 50, "never more than the cap: " + kept);
    }
    for (int times : keptTimes) {
      assertEquals(1, times, "each pair kept for exactly one of the k starts: inclusion probability 1/k");
    }
    assertEquals(1, sampling.stepFor(50), "no sampling at or under the cap");
  }

  @Test
  void cappedBasketsKeepPairCountsUnbiasedAndItemCountsExact() {
    HorizonSpec window = HorizonSpec.window("all", java.time.Duration.ofDays(1), 1);
    EngineConfig config = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("recent", java.time.Duration.ofDays(100000)), window))
        .maxPairsPerBasket(20).trackedPairCapacity(1 << 15).build();
    PairEngine engine = new PairEngine(config);
    BasketStream stream = BasketStream.pairedHalves(5, 60, 0.3, 16, 0);
    Map<String, Double> exactPairs = new HashMap<>();
    Map<String, Double> exactItems = new HashMap<>();
    int baskets = 4_000;
    for (int i = 0; i < baskets; i++) {
      String[] items = stream.nextBasket(); // up to 16 distinct items: up to 120 pairs, cap 20
      engine.addBasket(T0 + i, items);
      ExactOracle single = new ExactOracle();
      single.add(T0, items);
      single.pairCounts(window).forEach((k, v) -> exactPairs.merge(k, v, Double::sum));
      single.itemCounts(window).forEach((k, v) -> exactItems.merge(k, v, Double::sum));
    }
    assertTrue(engine.stats().cappedBaskets() > 500, "many baskets capped: " + engine.stats().cappedBaskets());
    assertTrue(engine.stats().pairsSkippedByCap() > 0);
    exactItems.forEach((item, count) -> assertEquals(count, engine.itemCount(item, "all").value(), 1e-9, item));
    // Unbiasedness in aggregate: the weighted pair total equals the true total up to sampling noise,
    // and the heaviest pairs' estimates lie within a few standard errors of the truth.
    double estimatedTotal = 0;
    double exactTotal = 0;
    int checked = 0;
    int outside = 0;
    for (Map.Entry<String, Double> e : exactPairs.entrySet()) {
      String[] ab = ExactOracle.split(e.getKey());
      double estimate = engine.pairCount(ab[0], ab[1], "all").value();
      estimatedTotal += estimate;
      exactTotal += e.getValue();
      if (e.getValue() >= 60) {
        checked++;
        // a pair in c capped baskets is kept ~Binomial(c, 1/k) times with weight k: sd ≤ k·sqrt(c/k) = sqrt(k·c)
        if (Math.abs(estimate - e.getValue()) > 4 * Math.sqrt(6 * e.getValue())) {
          outside++;
        }
      }
    }
    assertTrue(checked > 20, "enough heavy pairs to check: " + checked);
    assertTrue(outside <= 1, outside + " of " + checked + " heavy pairs beyond 4 sd");
    assertEquals(exactTotal, estimatedTotal, 0.02 * exactTotal, "weighted pair total unbiased");
  }
}
