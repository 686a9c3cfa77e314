package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.SizeClasses;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The pair count's dispersion φ (the variance-to-mean ratio of a weighted pair count under the null model, from the
 * pair cap's sampling steps per size class, see {@code SizeStrata}): exact against {@link ExactOracle}'s recount from
 * every basket, also after a merge and a snapshot round trip; and calibrated: on independent items with heavy-tailed
 * basket sizes the residuals (n_ab − E)/√(φ·E) have variance about 1, where (n_ab − E)/√E, which reads a weighted
 * count as baskets, has a variance well above 1.
 */
class PairCountDispersionTest {
  private static final long START = 1_700_000_000_000L;

  /** 70% of baskets of 1–3 items, 30% from a Pareto tail (α 1.5) from 6 up to {@code maxItems}. */
  private static int heavyTailedSize(SplittableRandom random, int maxItems) {
    if (random.nextDouble() < 0.7) {
      return 1 + random.nextInt(3);
    }
    return (int) Math.min(maxItems, Math.floor(6 * Math.pow(1 - random.nextDouble(), -1 / 1.5)));
  }

  /** Distinct items drawn uniformly from {@code catalog}. */
  private static String[] basket(SplittableRandom random, int size, int catalog) {
    Set<String> items = new LinkedHashSet<>();
    while (items.size() < size) {
      items.add("item-" + random.nextInt(catalog));
    }
    return items.toArray(new String[0]);
  }

  @Test
  void exactAgainstARecountAlsoMergedAndRestored() {
    int cap = 10; // baskets of 6 items and more are sampled, with steps from 2 to 12
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(1 << 15).trackedItemCapacity(512)
        .maxPairsPerBasket(cap).build();
    PairEngine one = new PairEngine(config);
    PairEngine[] halves = {new PairEngine(config), new PairEngine(config)};
    ExactOracle oracle = new ExactOracle();
    SplittableRandom random = new SplittableRandom(3);
    long span = Duration.ofDays(30).toMillis();
    for (int i = 0; i < 12_000; i++) {
      long t = START + span * i / 12_000;
      String[] items = basket(random, heavyTailedSize(random, 16), 120);
      one.addBasket(t, items);
      halves[i % 2].addBasket(t, items);
      oracle.add(t, items);
    }
    for (PairEngine engine : ThreeWays.of(one, halves)) {
      PairTable table = engine.refresh(PairTables.Options.of(1, 0));
      int checked = 0;
      double largest = 1;
      for (HorizonSpec h : config.horizons()) {
        var exact = oracle.pairCountDispersion(h, SizeClasses.defaults(), cap);
        for (PairStats pair : table.pairs(h.name())) {
          double want = exact.applyAsDouble(pair.itemA(), pair.itemB());
          double got = pair.counts().pairCountDispersion();
          assertEquals(want, got, 1e-9 * want, h.name() + " {" + pair.itemA() + ", " + pair.itemB() + "}");
          largest = Math.max(largest, got);
          checked++;
        }
      }
      assertTrue(checked > 3_000, "pairs checked: " + checked);
      assertTrue(largest > 2, "the cap samples: largest dispersion " + largest);
    }
  }

  /**
   * Seeds 1–3: all pairs of 150 equally popular independent items, one window holding every basket. The null
   * variance of a weighted count is φ·E (variance of the mean of the squared residuals over 11,175 correlated pairs:
   * a few percent), so the variance of the scaled residuals lies within [0.8, 1.25]; the unscaled ones exceed 1.5.
   */
  @Test
  void residualsScaledByTheDispersionHaveUnitVarianceOnIndependentHeavyTailedStreams() {
    for (long seed = 1; seed <= 3; seed++) {
      EngineConfig config = EngineConfig.builder()
          .horizons(List.of(HorizonSpec.window("day", Duration.ofHours(24), 1),
              HorizonSpec.decay("recent", Duration.ofHours(6))))
          .burstHorizon("recent").trackedPairCapacity(1 << 15).trackedItemCapacity(512).build();
      PairEngine engine = new PairEngine(config);
      SplittableRandom random = new SplittableRandom(seed);
      int catalog = 150;
      for (int i = 0; i < 20_000; i++) {
        engine.addBasket(START + i * 1_000L, basket(random, heavyTailedSize(random, 60), catalog));
      }
      PairTable table = engine.refresh(PairTables.Options.of(1, 0));
      List<double[]> residuals = new ArrayList<>();
      for (int a = 0; a < catalog; a++) {
        for (int b = a + 1; b < catalog; b++) {
          PairStats pair = table.pair("item-" + a, "item-" + b, "day").orElseThrow();
          double observed = pair.counts().countAB().value();
          double expected = pair.counts().expectedCountAB().value();
          double dispersion = pair.counts().pairCountDispersion();
          residuals.add(new double[] {(observed - expected) / Math.sqrt(dispersion * expected),
              (observed - expected) / Math.sqrt(expected), dispersion});
        }
      }
      double scaled = residuals.stream().mapToDouble(r -> r[0] * r[0]).average().orElseThrow();
      double unscaled = residuals.stream().mapToDouble(r -> r[1] * r[1]).average().orElseThrow();
      double dispersion = residuals.stream().mapToDouble(r -> r[2]).average().orElseThrow();
      String what = "seed " + seed + ": mean φ " + dispersion + ", variance scaled " + scaled + ", unscaled " + unscaled;
      assertTrue(scaled > 0.8 && scaled < 1.25, what);
      assertTrue(unscaled > 1.5, what);
    }
  }
}
