package org.pairpulse.serve.query;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.InventedStream;
import org.pairpulse.serve.fixtures.KestrelShop;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * Every query against a slow, obvious recomputation on the same view: take every pair (or item) of the horizon,
 * filter, sort everything by the documented order, keep the first {@code count}. The fast queries use bounded heaps
 * (and, for the table's own sort measure, the table's order); under a total order a heap's top {@code count} equals
 * the sorted prefix (common practice), so the answers must be equal element by element. The views: real engine
 * tables of the invented shop (seeds 1 to 3, cohort floor 0 and 50) and hand-made tables with random counts drawn
 * from a few values, so that measures tie often and the id tie-break decides. Invented data throughout.
 */
class QueryOracleTest {
  private static final int[] COUNTS = {1, 3, 20, 1000};

  private static List<FlooredTable> views() {
    List<FlooredTable> views = new ArrayList<>();
    for (long seed = 1; seed <= 3; seed++) {
      InventedStream stream = KestrelShop.stream(seed);
      stream.feed(InventedStream.T0, KestrelShop.END, 20_000);
      PairTable table = stream.refresh(1);
      views.add(FlooredTable.of(table, CohortFloor.of(0)));
      views.add(FlooredTable.of(table, CohortFloor.of(50)));
    }
    for (long seed = 1; seed <= 3; seed++) {
      views.add(FlooredTable.of(tiedTable(seed), CohortFloor.of(0)));
    }
    return views;
  }

  /** 24 items, every pair with a count from a handful of values (ties everywhere, some pairs repelling). */
  private static PairTable tiedTable(long seed) {
    SplittableRandom random = new SplittableRandom(seed);
    Tables tables = Tables.defaultHorizons().baskets(10_000);
    int[] itemCounts = {500, 1000, 2000};
    int[] pairCounts = {20, 50, 100, 200, 400};
    List<String> items = new ArrayList<>();
    for (int i = 0; i < 24; i++) {
      String item = "i" + (char) ('a' + i);
      items.add(item);
      tables.item(item, itemCounts[random.nextInt(itemCounts.length)]);
    }
    for (int i = 0; i < items.size(); i++) {
      for (int j = i + 1; j < items.size(); j++) {
        if (random.nextInt(3) > 0) {
          tables.pair(items.get(i), items.get(j), pairCounts[random.nextInt(pairCounts.length)]);
        }
      }
    }
    return tables.build(1);
  }

  // ------------------------------------------------------------------ the slow versions

  private static double orNegInf(double value) {
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }

  private static int byIds(PairStats x, PairStats y) {
    int a = x.itemA().compareTo(y.itemA());
    return a != 0 ? a : x.itemB().compareTo(y.itemB());
  }

  private static List<PairStats> slowTop(FlooredTable view, TopPairs.Query q) {
    List<PairStats> all = new ArrayList<>();
    for (PairStats p : view.pairs(q.horizon())) {
      if (q.includeBundles() || !p.measures().isBundle()) {
        all.add(p);
      }
    }
    all.sort((x, y) -> {
      int byValue = Double.compare(orNegInf(q.measure().of(y.measures())), orNegInf(q.measure().of(x.measures())));
      return byValue != 0 ? byValue : byIds(x, y);
    });
    return all.subList(0, Math.min(q.count(), all.size()));
  }

  private static List<DirectedRules.Rule> slowRules(FlooredTable view, String horizon, String item, Measure measure,
      int count, boolean outgoing) {
    List<DirectedRules.Rule> all = new ArrayList<>();
    for (PairStats p : view.pairs(horizon)) { // every pair, not the item's neighbour list
      if (p.itemA().equals(item) || p.itemB().equals(item)) {
        String other = p.other(item);
        String antecedent = outgoing ? item : other;
        boolean forward = p.itemA().equals(antecedent);
        all.add(new DirectedRules.Rule(p, antecedent, Suggester.directed(measure, p.measures(), forward)));
      }
    }
    all.sort((x, y) -> {
      double vx = Double.isNaN(x.measureValue()) ? Double.NEGATIVE_INFINITY : x.measureValue();
      double vy = Double.isNaN(y.measureValue()) ? Double.NEGATIVE_INFINITY : y.measureValue();
      int byValue = Double.compare(vy, vx);
      return byValue != 0 ? byValue : x.pair().other(item).compareTo(y.pair().other(item));
    });
    return all.subList(0, Math.min(count, all.size()));
  }

  private static List<PairStats> slowRepelling(FlooredTable view, String horizon, int count) {
    List<PairStats> all = new ArrayList<>(view.pairs(horizon).stream().filter(p -> p.measures().isRepelling()).toList());
    all.sort((x, y) -> {
      int byUpper = Double.compare(x.measures().liftUpper(), y.measures().liftUpper());
      if (byUpper != 0) {
        return byUpper;
      }
      int byG2 = Double.compare(x.measures().signedRootGSquared(), y.measures().signedRootGSquared());
      return byG2 != 0 ? byG2 : byIds(x, y);
    });
    return all.subList(0, Math.min(count, all.size()));
  }

  private static List<TopItems.ItemShare> slowItems(FlooredTable view, String horizon, String prefix, int count) {
    double baskets = view.baskets(horizon);
    List<TopItems.ItemShare> all = new ArrayList<>();
    for (Map.Entry<String, Estimate> e : view.items(horizon).entrySet()) {
      if (e.getKey().startsWith(prefix)) {
        all.add(new TopItems.ItemShare(e.getKey(), e.getValue(), e.getValue().value() / baskets));
      }
    }
    all.sort(Comparator.comparingDouble((TopItems.ItemShare s) -> -s.count().value())
        .thenComparing(TopItems.ItemShare::item));
    return all.subList(0, Math.min(count, all.size()));
  }

  // ------------------------------------------------------------------ the comparisons

  @Test
  void topPairsEqualTheSortedHorizon() {
    int compared = 0;
    int tableOrderUsed = 0;
    for (FlooredTable view : views()) {
      for (String horizon : view.horizonNames()) {
        for (Measure measure : Measure.values()) {
          for (int count : COUNTS) {
            for (boolean bundles : new boolean[] {true, false}) {
              TopPairs.Query q = new TopPairs.Query(horizon, measure, count, bundles);
              List<PairStats> expected = slowTop(view, q);
              assertEquals(expected, TopPairs.of(view, q), q.toString());
              compared += expected.isEmpty() ? 0 : 1;
              tableOrderUsed += measure == view.table().sortMeasure() && bundles && !expected.isEmpty() ? 1 : 0;
            }
          }
        }
      }
    }
    assertTrue(compared > 1000, "non-empty answers compared: " + compared);
    assertTrue(tableOrderUsed > 20, "answers read from the table's own order: " + tableOrderUsed);
  }

  @Test
  void directedRulesEqualEveryPairOfTheItemSorted() {
    Measure[] measures = {Measure.CONFIDENCE, Measure.CONVICTION, Measure.CONVICTION_UNADJUSTED, Measure.LIFT,
        Measure.SHRUNK_LIFT, Measure.LEVERAGE};
    int compared = 0;
    int directionsDiffer = 0;
    for (FlooredTable view : views()) {
      for (String horizon : view.horizonNames()) {
        for (String item : view.items(horizon).keySet()) {
          List<PairStats> neighbours = view.neighbours(item, horizon);
          for (Measure measure : measures) {
            for (int count : COUNTS) {
              List<DirectedRules.Rule> out = DirectedRules.outgoing(neighbours, item, measure, count);
              List<DirectedRules.Rule> in = DirectedRules.incoming(neighbours, item, measure, count);
              String what = item + " " + horizon + " " + measure + " " + count;
              assertEquals(slowRules(view, horizon, item, measure, count, true), out, "outgoing " + what);
              assertEquals(slowRules(view, horizon, item, measure, count, false), in, "incoming " + what);
              compared += out.isEmpty() ? 0 : 1;
              directionsDiffer += !out.isEmpty() && !out.get(0).consequent().equals(in.get(0).antecedent()) ? 1 : 0;
            }
          }
        }
      }
    }
    assertTrue(compared > 1000, "non-empty answers compared: " + compared);
    assertTrue(directionsDiffer > 10, "answers where the best outgoing and incoming rules differ: " + directionsDiffer);
  }

  @Test
  void repellingPairsEqualTheFilteredSortedHorizon() {
    int compared = 0;
    for (FlooredTable view : views()) {
      for (String horizon : view.horizonNames()) {
        for (int count : COUNTS) {
          List<PairStats> expected = slowRepelling(view, horizon, count);
          assertEquals(expected, RepellingPairs.of(view.pairs(horizon), count), horizon + " " + count);
          compared += expected.size() > 1 ? 1 : 0;
        }
      }
    }
    assertTrue(compared > 10, "answers with more than one repelling pair compared: " + compared);
  }

  @Test
  void topItemsEqualTheSortedItems() {
    String[] prefixes = {"", "i", "ia", "plan-", "case", "zzz"};
    int compared = 0;
    for (FlooredTable view : views()) {
      for (String horizon : view.horizonNames()) {
        for (String prefix : prefixes) {
          for (int count : COUNTS) {
            List<TopItems.ItemShare> expected = slowItems(view, horizon, prefix, count);
            double baskets = view.baskets(horizon);
            assertEquals(expected, TopItems.of(view.items(horizon), baskets, prefix, count),
                horizon + " '" + prefix + "' " + count);
            compared += expected.size() > 1 ? 1 : 0;
          }
        }
      }
    }
    assertTrue(compared > 50, "answers with more than one item compared: " + compared);
  }
}
