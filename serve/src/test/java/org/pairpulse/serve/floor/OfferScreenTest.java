package org.pairpulse.serve.floor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.Multiplicity;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The offer screen reads p-values from counts, row by row, without sorting a horizon or computing its measures. The
 * slow, obvious oracle is the Benjamini–Hochberg step over the horizon's published list of statistics
 * ({@link FlooredTable#pairs}, every measure computed), the pairs passed held by identity: on seeded engines (floors,
 * rates, skews) and on tables built with many tied p-values at the threshold, both pass the same pairs.
 */
class OfferScreenTest {
  private static final long T0 = 1_780_000_000_000L;

  @ParameterizedTest(name = "seed {0}, floor {1}, q {2}, skew {3}")
  @CsvSource({"1, 0, 0.05, 2.5", "2, 5, 0.05, 1.5", "3, 50, 0.05, 2.5", "4, 5, 0.01, 3.0", "5, 0, 0.2, 1.0",
      "6, 5, 0.5, 2.0"})
  void theScreenOnCountsPassesWhatTheStepOverEveryMeasurePasses(long seed, double floor, double q, double skew) {
    PairTable table = seededEngine(seed, skew).refresh(PairTables.Options.of(1, 0L));
    FlooredTable fast = FlooredTable.of(table, CohortFloor.of(floor));
    Map<String, OfferScreen.Horizon> screens = new HashMap<>();
    for (String name : table.horizonNames()) { // the screen first: no row's statistics are computed yet
      screens.put(name, OfferScreen.of(fast, q).horizon(name));
    }
    int passedSomewhere = 0;
    for (String name : table.horizonNames()) {
      List<PairStats> published = fast.pairs(name);
      boolean[] exact = exactStep(published, q);
      OfferScreen.Horizon screen = screens.get(name);
      assertEquals(published.size(), screen.screened(), name);
      int passed = 0;
      for (int i = 0; i < exact.length; i++) {
        assertEquals(exact[i], screen.passes(published.get(i)), name + " " + published.get(i));
        passed += exact[i] ? 1 : 0;
      }
      assertEquals(passed, screen.passed(), name);
      passedSomewhere += passed;
    }
    assertTrue(passedSomewhere > 0, "some pairs pass, so the comparison says something");
  }

  /** A row's p-value read from its counts is, bit for bit, the one its statistics give afterwards. */
  @Test
  void aRowsPValueFromCountsEqualsItsStatistics() {
    PairTable table = seededEngine(7, 2.5).refresh(PairTables.Options.of(1, 0L));
    int compared = 0;
    for (String name : table.horizonNames()) {
      HorizonTable held = table.horizon(name).orElseThrow();
      for (int row = 0; row < held.rowCount(); row++) {
        if (held.present(row)) {
          double fromCounts = held.associationPValue(row);
          double fromStats = held.row(row).measures().associationPValue();
          assertEquals(Double.doubleToRawLongBits(fromStats), Double.doubleToRawLongBits(fromCounts), name + " " + row);
          compared++;
        }
      }
    }
    assertTrue(compared > 1000, "compared " + compared);
  }

  /**
   * Adversarial ties: groups of pairs with equal counts, so equal p-values, among them the group at the step's
   * threshold and a NaN p-value (counted, never passing); a pair of another horizon or table with the same items
   * does not pass by identity.
   */
  @Test
  void tiedPValuesAtTheThresholdPassOrFailTogether() {
    List<PairStats> pairs = new ArrayList<>();
    int[] groupSizes = {3, 5, 8, 13, 21};
    double[] observed = {40, 30, 22, 18, 12};
    int item = 0;
    for (int g = 0; g < groupSizes.length; g++) {
      for (int k = 0; k < groupSizes[g]; k++) {
        pairs.add(stats("x" + item, "y" + item, observed[g], 1_000, 100, 100));
        item++;
      }
    }
    pairs.add(stats("z0", "z1", 0, 0, 0, 0)); // N = 0: the p-value is NaN
    boolean someButNotAll = false;
    for (double q : new double[] {0.001, 0.01, 0.05, 0.2, 0.5, 0.9}) {
      PairTable table = listTable(pairs);
      FlooredTable floored = FlooredTable.of(table, CohortFloor.of(0));
      OfferScreen.Horizon screen = OfferScreen.of(floored, q).horizon("day");
      List<PairStats> published = floored.pairs("day");
      boolean[] exact = exactStep(published, q);
      for (int i = 0; i < exact.length; i++) {
        assertEquals(exact[i], screen.passes(published.get(i)), "q " + q + " " + published.get(i));
        if (published.get(i).itemA().equals("z0")) {
          assertFalse(screen.passes(published.get(i)));
        }
      }
      assertEquals(published.size(), screen.screened());
      someButNotAll |= screen.passed() > 0 && screen.passed() < published.size() - 1;
      PairStats twin = stats("x0", "y0", observed[0], 1_000, 100, 100);
      assertFalse(screen.passes(twin), "another object with the same items is not this table's pair");
    }
    assertTrue(someButNotAll, "some rate passes part of the tied groups");
  }

  /** The exact step: every published pair's p-value from its full measures, passes by position. */
  private static boolean[] exactStep(List<PairStats> published, double q) {
    double[] p = new double[published.size()];
    for (int i = 0; i < p.length; i++) {
      p[i] = published.get(i).measures().associationPValue();
    }
    return Multiplicity.benjaminiHochberg(p, q);
  }

  private static PairStats stats(String a, String b, double ab, double baskets, double na, double nb) {
    PairCounts counts = new PairCounts(baskets, Estimate.exact(na), Estimate.exact(nb), Estimate.exact(ab));
    return new PairStats(a, b, "day", counts, PairMeasures.of(counts), 0L);
  }

  private static PairTable listTable(List<PairStats> pairs) {
    List<PairStats> sorted = new ArrayList<>(pairs);
    sorted.sort((x, y) -> {
      int byLift = Double.compare(y.measures().shrunkLift(), x.measures().shrunkLift());
      return byLift != 0 ? byLift : (x.itemA() + " " + x.itemB()).compareTo(y.itemA() + " " + y.itemB());
    });
    Map<String, List<PairStats>> neighbours = new HashMap<>();
    Map<String, Estimate> items = new HashMap<>();
    for (PairStats s : sorted) {
      neighbours.computeIfAbsent(s.itemA(), k -> new ArrayList<>()).add(s);
      neighbours.computeIfAbsent(s.itemB(), k -> new ArrayList<>()).add(s);
      items.put(s.itemA(), s.counts().countA());
      items.put(s.itemB(), s.counts().countB());
    }
    HorizonTable day = new HorizonTable("day", 1_000, sorted, neighbours, items);
    return new PairTable(1, T0, T0, Measure.SHRUNK_LIFT, Map.of("day", day), List.of("day"));
  }

  private static PairEngine seededEngine(long seed, double skew) {
    PairEngine engine = new PairEngine(EngineConfig.defaults().toBuilder().trackedPairCapacity(512)
        .trackedItemCapacity(128).build());
    SplittableRandom random = new SplittableRandom(seed);
    long t = T0;
    for (int i = 0; i < 20_000; i++) {
      t += random.nextLong(20_000L);
      int size = 1 + random.nextInt(5);
      String[] basket = new String[size];
      for (int k = 0; k < size; k++) {
        basket[k] = "item-" + (int) Math.floor(Math.pow(random.nextDouble(), skew) * 400);
      }
      if (random.nextInt(4) == 0 && size > 1) {
        basket[1] = "planted-" + (basket[0].hashCode() & 7); // pairs well above independence, so some pass
      }
      engine.addBasket(t, basket);
    }
    return engine;
  }
}
