package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;

/** The engine against {@link ExactOracle} on seeded Zipf streams with planted associations. */
class EngineOracleTest {
  private static final long HOUR = Duration.ofHours(1).toMillis();
  private static final long START = 1_700_000_000_000L;

  /** Streams spread over 40 days (160 half-lives of `recent`: the landmark moves), some late and some expired. */
  private static void feed(PairEngine engine, ExactOracle oracle, BasketStream stream, int baskets) {
    long span = Duration.ofDays(40).toMillis();
    for (int i = 0; i < baskets; i++) {
      long t = START + span * i / baskets;
      if (stream.random().nextDouble() < 0.05) {
        t -= stream.random().nextLong(3 * HOUR); // late, but within the live panes
      }
      String[] items = stream.nextBasket();
      engine.addBasket(t, items);
      oracle.add(t, items);
    }
    // a few baskets so old that every window has dropped their pane: they count in the decay only
    for (int i = 0; i < 20; i++) {
      long t = START + span - Duration.ofDays(35).toMillis() - i * HOUR;
      String[] items = stream.nextBasket();
      engine.addBasket(t, items);
      oracle.add(t, items);
    }
  }

  @Test
  void exactWhileTheTrackedTablesNeverFill() {
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(1 << 16).trackedItemCapacity(512).build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    feed(engine, oracle, BasketStream.pairedHalves(42, 300, 1.0, 6, 10), 20_000);

    assertTrue(engine.stats().expiredWindowUpdates() >= 40, "old baskets must miss both windows");
    HorizonState recent = engine.horizon("recent");
    assertTrue(recent.landmarkMillis > START, "40 days of a 6 h half-life must have moved the landmark");

    for (HorizonSpec h : config.horizons()) {
      double exactN = oracle.baskets(h);
      assertEquals(exactN, engine.basketCount(h.name()), 1e-9 * Math.max(1, exactN), "N in " + h.name());
      for (Map.Entry<String, Double> e : oracle.itemCounts(h).entrySet()) {
        Estimate got = engine.itemCount(e.getKey(), h.name());
        assertEquals(e.getValue(), got.value(), 1e-9 * Math.max(1, e.getValue()), "n_a of " + e.getKey() + " in " + h.name());
        assertEquals(got.lower(), got.upper(), 1e-12 * Math.max(1, got.upper()), "exact counts carry no error");
      }
      for (Map.Entry<String, Double> e : oracle.pairCounts(h).entrySet()) {
        String[] ab = ExactOracle.split(e.getKey());
        Estimate got = engine.pairCount(ab[0], ab[1], h.name());
        assertEquals(e.getValue(), got.value(), 1e-9 * Math.max(1, e.getValue()), "n_ab of " + e.getKey() + " in " + h.name());
      }
    }
  }

  @Test
  void boundsHoldWhenSketchesAndEvictionsDoTheWork() {
    EngineConfig config = EngineConfig.builder()
        .trackedPairCapacity(256).trackedItemCapacity(128)
        .pairError(0.01, 0.02).itemError(0.01, 0.02).build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    feed(engine, oracle, BasketStream.pairedHalves(7, 2_000, 1.0, 8, 30), 30_000);
    assertTrue(engine.stats().pairEvictions() > 0, "the stream must overflow the tracked table");

    for (HorizonSpec h : config.horizons()) {
      // a window's lower bound sums per-pane bounds: the union bound gives paneCount·δ
      double allowedFailure = h.paneCount() * Math.exp(-4) + 0.01;
      checkBounds(oracle.itemCounts(h), (k) -> engine.itemCount(k, h.name()), allowedFailure, "items " + h.name());
      checkBounds(oracle.pairCounts(h), (k) -> {
        String[] ab = ExactOracle.split(k);
        return engine.pairCount(ab[0], ab[1], h.name());
      }, allowedFailure, "pairs " + h.name());
    }
  }

  private static void checkBounds(Map<String, Double> exact, java.util.function.Function<String, Estimate> read,
      double allowedFailureShare, String what) {
    int lowerFailures = 0;
    for (Map.Entry<String, Double> e : exact.entrySet()) {
      Estimate got = read.apply(e.getKey());
      double truth = e.getValue();
      double slack = 1e-9 * Math.max(1, truth);
      assertTrue(got.upper() >= truth - slack, what + ": undercount of " + e.getKey() + ": " + got + " < " + truth);
      if (got.lower() > truth + slack) {
        lowerFailures++;
      }
    }
    double share = (double) lowerFailures / exact.size();
    assertTrue(share <= allowedFailureShare, what + ": lower bound above the truth for " + share + " of keys");
  }

  /**
   * Space-Saving's guarantee (Metwally, Agrawal, El Abbadi, "Efficient computation of frequent and top-k elements in
   * data streams", ICDT 2005; extended to weighted increments as argued in TrackedTable's class comment) on the rank
   * weights:
   * under the default fractional ranking every pair whose rank weight (1/(k − 1) per occurrence in a basket of k items,
   * recomputed by the oracle) exceeds W_rank / capacity is tracked; under the count ranking, every pair whose count
   * exceeds W / capacity.
   */
  @org.junit.jupiter.params.ParameterizedTest
  @org.junit.jupiter.params.provider.EnumSource(PairRanking.class)
  void spaceSavingGuaranteeEveryPairAboveWOverCapacityIsTracked(PairRanking ranking) {
    int capacity = 128;
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(capacity).trackedItemCapacity(64)
        .pairError(0.005, 0.02).pairRanking(ranking).build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    feed(engine, oracle, BasketStream.pairedHalves(11, 1_000, 1.1, 6, 20), 30_000);
    HorizonSpec tracking = config.trackingSpec(); // the internal decay that ranks tracked keys
    Map<String, Double> pairWeights = ranking == PairRanking.COUNT ? oracle.pairCounts(tracking) : oracle.pairRanks(tracking);
    double total = pairWeights.values().stream().mapToDouble(Double::doubleValue).sum();
    double threshold = total / capacity;
    int heavy = 0;
    for (Map.Entry<String, Double> e : pairWeights.entrySet()) {
      if (e.getValue() > threshold) {
        heavy++;
        String[] ab = ExactOracle.split(e.getKey());
        assertTrue(engine.isTracked(ab[0], ab[1]), "pair " + e.getKey() + " weighs " + e.getValue() + " > W/C = " + threshold);
      }
    }
    assertTrue(heavy > 5, "the stream must have heavy pairs for the check to mean something: " + heavy);
    assertTrue(engine.pairs.heapValid() && engine.items.heapValid(), "heap and index consistent");
    // the same guarantee for items
    Map<String, Double> itemWeights = oracle.itemCounts(tracking);
    double itemTotal = itemWeights.values().stream().mapToDouble(Double::doubleValue).sum();
    for (Map.Entry<String, Double> e : itemWeights.entrySet()) {
      if (e.getValue() > itemTotal / 64) {
        assertTrue(engine.items.find(org.pairpulse.sketch.hash.ItemHash.of(e.getKey())) >= 0, "item " + e.getKey());
      }
    }
  }

  @Test
  void windowExpiryIsExactAtPaneGranularity() {
    HorizonSpec window = HorizonSpec.window("w", Duration.ofHours(4), 4);
    EngineConfig config = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("d", Duration.ofHours(1)), window)).trackingHorizon("d").build();
    PairEngine engine = new PairEngine(config);
    long t0 = 10 * HOUR; // pane 10
    engine.addBasket(t0 + 5, "a", "b");          // pane 10
    engine.addBasket(t0 + HOUR - 1, "a", "b");   // pane 10, last millisecond
    engine.addBasket(t0 + HOUR, "a", "c");       // pane 11
    engine.addBasket(t0 + 3 * HOUR, "b", "c");   // pane 13: window holds 10..13
    assertEquals(4, engine.basketCount("w"));
    assertEquals(2, engine.pairCount("a", "b", "w").value());
    engine.advanceTo(t0 + 4 * HOUR - 1);         // still pane 13
    assertEquals(4, engine.basketCount("w"));
    engine.advanceTo(t0 + 4 * HOUR);             // pane 14: pane 10 leaves whole
    assertEquals(2, engine.basketCount("w"));
    assertEquals(0, engine.pairCount("a", "b", "w").value());
    assertEquals(1, engine.pairCount("a", "c", "w").value());
    engine.addBasket(t0 + 30, "a", "b");         // pane 10 is gone: counts only in the decay
    assertEquals(1, engine.stats().expiredWindowUpdates());
    assertEquals(2, engine.basketCount("w"));
    engine.advanceTo(t0 + 20 * HOUR);            // everything leaves
    assertEquals(0, engine.basketCount("w"));
    assertEquals(0, engine.itemCount("c", "w").upper());
  }

  @Test
  void decayMatchesTheDirectFormulaAcrossManyLandmarkMoves() {
    HorizonSpec fast = HorizonSpec.decay("fast", Duration.ofMinutes(10));
    EngineConfig config = EngineConfig.builder().horizons(List.of(fast)).trackingHorizon("fast").build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    BasketStream stream = BasketStream.pairedHalves(3, 50, 1.0, 4, 3);
    long t = START;
    for (int i = 0; i < 5_000; i++) {
      t += stream.random().nextLong(60_000); // about 4 days: ~600 half-lives, the landmark moves about 9 times
      String[] items = stream.nextBasket();
      engine.addBasket(t, items);
      oracle.add(t, items);
    }
    assertEquals(oracle.baskets(fast), engine.basketCount("fast"), 1e-9 * oracle.baskets(fast));
    for (Map.Entry<String, Double> e : oracle.pairCounts(fast).entrySet()) {
      String[] ab = ExactOracle.split(e.getKey());
      double got = engine.pairCount(ab[0], ab[1], "fast").value();
      assertEquals(e.getValue(), got, 1e-9 * Math.max(1e-12, e.getValue()) + 1e-300, e.getKey());
    }
  }

  /**
   * Narrow sketches (ε 0.03: 128 counters per row), a catalog of 20 items and baskets of up to 22 items
   * (up to 190 pairs, under the pair cap) make the keys of one basket collide: every
   * estimate the engine gives for tracked and untracked keys, in every horizon, must still be ordered
   * (lower ≤ value ≤ upper, which {@link Estimate} enforces) and bracket the exact count, and a refresh must
   * succeed. Guards the admission path, which reads some estimates while adding and others afterwards.
   */
  @Test
  void estimatesStayOrderedAndBracketTheTruthUnderHeavyCollisions() {
    EngineConfig config = EngineConfig.builder().itemError(0.03, 0.02).pairError(0.03, 0.02).decayPairEpsilon(0.03)
        .trackedPairCapacity(64).trackedItemCapacity(5).build();
    PairEngine engine = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    feed(engine, oracle, BasketStream.pairedHalves(2, 20, 1.0, 22, 0), 4_000);
    engine.refresh(PairTables.Options.of(1, START));
    int checked = 0;
    for (HorizonSpec h : config.horizons()) {
      for (Map.Entry<String, Double> e : oracle.pairCounts(h).entrySet()) {
        String[] ab = ExactOracle.split(e.getKey());
        Estimate estimate = engine.pairCount(ab[0], ab[1], h.name());
        assertTrue(estimate.upper() >= e.getValue() * (1 - 1e-9) - 1e-9, h.name() + " " + e.getKey() + ": " + estimate
            + " exact " + e.getValue());
        checked++;
      }
    }
    assertTrue(checked > 300, "pairs checked: " + checked);
    assertTrue(engine.stats().pairEvictions() > 100, "the tracked table must churn: " + engine.stats());
    for (TrackedTable table : List.of(engine.items, engine.pairs)) { // the point value never exceeds the upper bound
      for (int i = 0; i < table.size() * table.horizonCount; i++) {
        assertTrue(table.admissionBias[i] >= 0, "admission bias " + table.admissionBias[i] + " at " + i);
      }
    }
  }
}
