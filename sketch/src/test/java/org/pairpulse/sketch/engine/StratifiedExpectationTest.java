package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.stats.SizeClasses;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The engine's size-adjusted expected pair count against {@link ExactOracle}'s recomputation from every basket, on
 * seeded streams whose basket sizes vary (1 to 8 items plus planted partners): exact while the tracked tables never
 * fill (also after a merge and a snapshot round trip), within its bounds when sketches and evictions do the work.
 */
class StratifiedExpectationTest {
  private static final long HOUR = Duration.ofHours(1).toMillis();
  private static final long START = 1_700_000_000_000L;

  private static void feed(PairEngine[] engines, ExactOracle oracle, BasketStream stream, int baskets) {
    long span = Duration.ofDays(30).toMillis();
    for (int i = 0; i < baskets; i++) {
      long t = START + span * i / baskets;
      if (stream.random().nextDouble() < 0.05) {
        t -= stream.random().nextLong(3 * HOUR);
      }
      String[] items = stream.nextBasket();
      engines[i % engines.length].addBasket(t, items);
      oracle.add(t, items);
    }
  }

  @Test
  void exactWhileTrackedFromTheFirstBasketAlsoMergedAndRestored() {
    for (SizeClasses classes : new SizeClasses[] {SizeClasses.defaults(), SizeClasses.of(1, 2, 4, 7)}) {
      EngineConfig config = EngineConfig.builder().trackedPairCapacity(1 << 15).trackedItemCapacity(512)
          .sizeClasses(classes).build();
      PairEngine one = new PairEngine(config);
      PairEngine[] halves = {new PairEngine(config), new PairEngine(config)};
      ExactOracle oracle = new ExactOracle();
      BasketStream stream = BasketStream.pairedHalves(11, 300, 1.0, 8, 10);
      feed(new PairEngine[] {one}, new ExactOracle(), BasketStream.pairedHalves(11, 300, 1.0, 8, 10), 15_000);
      feed(halves, oracle, stream, 15_000);
      for (PairEngine engine : ThreeWays.of(one, halves)) {
        PairTable table = engine.refresh(PairTables.Options.of(1, 0));
        int checked = 0;
        for (HorizonSpec h : config.horizons()) {
          java.util.function.ToDoubleBiFunction<String, String> oracleE = oracle.stratifiedExpected(h, classes);
          for (PairStats pair : table.pairs(h.name())) {
            double exact = oracleE.applyAsDouble(pair.itemA(), pair.itemB());
            Estimate e = pair.counts().expectedCountAB();
            String what = classes + " " + h.name() + " {" + pair.itemA() + ", " + pair.itemB() + "}";
            assertEquals(exact, e.value(), 1e-9 * Math.max(1, exact), what);
            assertEquals(e.lower(), e.upper(), 1e-9 * Math.max(1, exact), what + ": exact counts carry no error");
            // the adjusted measures against their exact recomputation
            PairCounts counts = pair.counts();
            PairMeasures expected = PairMeasures.of(PairCounts.exact(counts.baskets(), counts.countA().value(),
                counts.countB().value(), counts.countAB().value()).withStratifiedExpected(Estimate.exact(exact)),
                MeasureSettings.defaults());
            assertEquals(expected.lift(), pair.measures().lift(), 1e-9 * Math.max(1, expected.lift()), what);
            assertEquals(expected.shrunkLift(), pair.measures().shrunkLift(), 1e-9 * expected.shrunkLift(), what);
            assertEquals(expected.signedRootGSquared(), pair.measures().signedRootGSquared(), 1e-6, what);
            assertEquals(counts.baskets() * counts.countAB().value() / (counts.countA().value() * counts.countB().value()),
                pair.measures().liftUnadjusted(), 1e-9 * pair.measures().liftUnadjusted(), what);
            checked++;
          }
        }
        assertTrue(checked > 3_000, "pairs checked: " + checked);
      }
    }
  }

  @Test
  void boundsHoldWhenSketchesAndEvictionsDoTheWork() {
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(256).trackedItemCapacity(64)
        .pairError(0.01, 0.02).itemError(0.01, 0.02).build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    feed(new PairEngine[] {engine}, oracle, BasketStream.pairedHalves(5, 2_000, 1.0, 8, 10), 30_000);
    assertTrue(engine.stats().pairEvictions() > 0);
    PairTable table = engine.refresh(PairTables.Options.of(1, 0));
    for (HorizonSpec h : config.horizons()) {
      int outside = 0;
      int checked = 0;
      java.util.function.ToDoubleBiFunction<String, String> oracleE = oracle.stratifiedExpected(h, config.sizeClasses());
      for (PairStats pair : table.pairs(h.name())) {
        double exact = oracleE.applyAsDouble(pair.itemA(), pair.itemB());
        Estimate e = pair.counts().expectedCountAB();
        if (exact < e.lower() * (1 - 1e-9) || exact > e.upper() * (1 + 1e-9)) {
          outside++;
        }
        checked++;
      }
      // the bounds hold when the item counts' bounds do: per pane with probability >= 1 − δ (union bound)
      double allowed = h.paneCount() * Math.exp(-4) * 2 + 0.01;
      assertTrue(checked > 50, h.name());
      assertTrue(outside <= allowed * checked, h.name() + ": " + outside + " of " + checked + " outside their bounds");
    }
    // the bounds' O(classes) search against trying every pair of classes, for tracked items (part of the count of
    // unknown class) and untracked ones (all of it), every horizon
    for (HorizonState state : engine.horizons) {
      SizeStrata strata = SizeStrata.of(engine, state);
      List<SizeStrata.ItemClasses> items = new ArrayList<>();
      for (int slot = 0; slot < engine.items.size(); slot++) {
        Estimate count = Counts.tracked(engine, engine.items, slot, state);
        items.add(strata.item(Counts.knownByClass(engine, state, slot), count));
        items.add(strata.untracked(count));
      }
      for (SizeStrata.ItemClasses a : items) {
        for (SizeStrata.ItemClasses b : items) {
          Estimate fast = strata.expected(a, b).expected();
          double[] slow = strata.boundsByEnumeration(a, b);
          assertEquals(Math.max(0, Math.min(slow[0], fast.value())), fast.lower(), 1e-9 * (1 + fast.upper()));
          assertEquals(Math.max(slow[1], fast.value()), fast.upper(), 1e-9 * (1 + fast.upper()));
        }
      }
    }
  }
}
