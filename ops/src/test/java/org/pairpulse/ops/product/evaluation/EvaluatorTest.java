package org.pairpulse.ops.product.evaluation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.table.PairTable;

/** Test-then-train on a tiny stream whose answers are worked out by hand. */
class EvaluatorTest {
  static final long T0 = 1_780_272_000_000L;
  /** The hand counts below are for the association ranking (Σ ln shrunk lift); the posterior has its own test. */
  static final EvaluationSettings ASSOCIATION = EvaluationSettings.defaults().withRanking(SuggestionRanking.ASSOCIATION);

  /**
   * The training stream, all at T0: {a, b} ×10, {a} ×5, {c, d} ×10, {p} ×30, {q} ×20. In {@code recent}: n_p = 30,
   * n_q = 20, n_a = 15, n_b = n_c = n_d = 10; the only pairs are {a, b} and {c, d}.
   */
  static FlooredTable trainedTable() {
    PairEngine engine = new PairEngine(EngineConfig.builder().trackedPairCapacity(64).trackedItemCapacity(64).build());
    repeat(engine, 10, "a", "b");
    repeat(engine, 5, "a");
    repeat(engine, 10, "c", "d");
    repeat(engine, 30, "p");
    repeat(engine, 20, "q");
    PairTable table = engine.refresh(PairTables.Options.of(7, T0));
    return FlooredTable.of(table, CohortFloor.none());
  }

  static void repeat(PairEngine engine, int times, String... items) {
    for (int i = 0; i < times; i++) {
      engine.addBasket(T0, items);
    }
  }

  /**
   * Popular order (n_a descending, then id): p 30, q 20, a 15, b 10, c 10, d 10. The hidden item's popular rank
   * skips the query items. The incremental table suggests b for {a} and a for {b}, d for {c} and c for {d}.
   */
  static int expectedIncrementalRank(List<String> basket, String hidden) {
    String partner = Map.of("a", "b", "b", "a", "c", "d", "d", "c").get(hidden);
    return partner != null && basket.contains(partner) ? 1 : 0;
  }

  static int expectedPopularRank(List<String> basket, String hidden) {
    int rank = 0;
    for (String item : List.of("p", "q", "a", "b", "c", "d")) {
      if (basket.contains(item) && !item.equals(hidden)) {
        continue;
      }
      rank++;
      if (item.equals(hidden)) {
        return rank <= 10 ? rank : 0;
      }
    }
    return 0;
  }

  @Test
  void ranksHitsAndReciprocalRanksMatchTheHandCount() {
    FlooredTable table = trainedTable();
    FlooredTable nightly = FlooredTable.of(PairTable.empty(), CohortFloor.none());
    List<Trial> trials = new ArrayList<>();
    Evaluator evaluator = new Evaluator(ASSOCIATION.withShare(1.0), Suggester.defaults(), trials::add);
    List<List<String>> baskets = List.of(List.of("a", "b"), List.of("a", "c"), List.of("p", "q"), List.of("c", "d", "q"));
    for (int i = 0; i < baskets.size(); i++) {
      assertTrue(evaluator.evaluate("t" + i, T0 + i, baskets.get(i), table, nightly).isPresent());
    }
    assertTrue(evaluator.evaluate("single", T0, List.of("a", "a"), table, nightly).isEmpty(), "one distinct item");
    assertEquals(4, trials.size());

    double incrementalHits = 0;
    double popularHitsAt1 = 0;
    double popularHitsAt5 = 0;
    double popularReciprocal = 0;
    for (int i = 0; i < trials.size(); i++) {
      Trial trial = trials.get(i);
      List<String> basket = baskets.get(i);
      assertTrue(basket.contains(trial.hidden()));
      List<String> query = new ArrayList<>(basket);
      query.remove(trial.hidden());
      assertEquals(query.stream().sorted().toList(), trial.query());
      int incremental = expectedIncrementalRank(basket, trial.hidden());
      int popular = expectedPopularRank(basket, trial.hidden());
      assertEquals(incremental, trial.incrementalRank(), "incremental rank of " + trial);
      assertEquals(popular, trial.popularRank(), "popular rank of " + trial);
      assertEquals(0, trial.nightlyRank(), "the nightly table is empty");
      assertEquals(7, trial.incrementalVersion());
      incrementalHits += incremental == 1 ? 1 : 0;
      popularHitsAt1 += popular == 1 ? 1 : 0;
      popularHitsAt5 += popular >= 1 && popular <= 5 ? 1 : 0;
      popularReciprocal += popular > 0 ? 1.0 / popular : 0;
    }
    Tally incremental = evaluator.tally(EvaluationMethod.INCREMENTAL);
    assertEquals(4, incremental.trials());
    assertEquals(incrementalHits / 4, incremental.hitRate(1), 1e-12);
    assertEquals(incrementalHits / 4, incremental.hitRate(10), 1e-12);
    assertEquals(incrementalHits / 4, incremental.meanReciprocalRank(), 1e-12);
    Tally popular = evaluator.tally(EvaluationMethod.POPULAR);
    assertEquals(popularHitsAt1 / 4, popular.hitRate(1), 1e-12);
    assertEquals(popularHitsAt5 / 4, popular.hitRate(5), 1e-12);
    assertEquals(popularReciprocal / 4, popular.meanReciprocalRank(), 1e-12);
    assertEquals(0.0, evaluator.tally(EvaluationMethod.NIGHTLY).hitRate(10));
  }

  @Test
  void theTinyStreamsNumbersWorkedOutOnce() {
    // basket {a, b}: either hidden item is found first by its partner; popular rank 3 (p, q, then the hidden one)
    // basket {p, q}: nothing pairs with p or q; popular rank 1 (the hidden one is the most popular left)
    FlooredTable table = trainedTable();
    FlooredTable nightly = FlooredTable.of(PairTable.empty(), CohortFloor.none());
    Evaluator evaluator = new Evaluator(ASSOCIATION.withShare(1.0), Suggester.defaults(), null);
    evaluator.evaluate("x1", T0, List.of("a", "b"), table, nightly);
    evaluator.evaluate("x2", T0, List.of("p", "q"), table, nightly);
    Tally incremental = evaluator.tally(EvaluationMethod.INCREMENTAL);
    Tally popular = evaluator.tally(EvaluationMethod.POPULAR);
    assertEquals(0.5, incremental.hitRate(1), 1e-12);
    assertEquals(0.5, incremental.meanReciprocalRank(), 1e-12);
    assertEquals(0.5, popular.hitRate(1), 1e-12);
    assertEquals(1.0, popular.hitRate(5), 1e-12);
    assertEquals((1.0 / 3 + 1.0) / 2, popular.meanReciprocalRank(), 1e-12);
  }

  @Test
  void posteriorRanksOnTheTinyStream() {
    // N = 75. Query {a}: b = ln(10/75) + ln((10 + 10)/(15·10/75 + 10)) = ln(2/9) comes after p = ln(30/75) and
    // q = ln(20/75), which no pair links to a (independent: their log support alone): rank 3. Query {b}: a =
    // ln(15/75 · 20/12) = ln(1/3), after p only: rank 2. Query {p} or {q}: no published pair, so the answer is the
    // prior alone, most frequent first without the query item: the other one is first (as for the popular baseline).
    FlooredTable table = trainedTable();
    List<Trial> trials = new ArrayList<>();
    Evaluator evaluator = new Evaluator(EvaluationSettings.defaults().withShare(1.0), Suggester.defaults(), trials::add);
    assertEquals(SuggestionRanking.POSTERIOR, evaluator.settings().ranking(), "the evaluation's default");
    for (int i = 0; i < 40; i++) {
      evaluator.evaluate("ab" + i, T0, List.of("a", "b"), table, table);
      evaluator.evaluate("pq" + i, T0, List.of("p", "q"), table, table);
    }
    int hiddenA = 0;
    int hiddenB = 0;
    for (Trial trial : trials) {
      int expected = switch (trial.hidden()) {
        case "a" -> 2;
        case "b" -> 3;
        default -> 1;
      };
      hiddenA += trial.hidden().equals("a") ? 1 : 0;
      hiddenB += trial.hidden().equals("b") ? 1 : 0;
      assertEquals(expected, trial.incrementalRank(), trial.toString());
      assertEquals(expected, trial.nightlyRank(), trial.toString());
    }
    assertTrue(hiddenA > 0 && hiddenB > 0, "both hidden items occurred: " + hiddenA + ", " + hiddenB);
  }

  @Test
  void samplingAndHiddenItemAreFixedByIdAndSeed() {
    Evaluator one = new Evaluator(EvaluationSettings.defaults(), Suggester.defaults(), null);
    Evaluator two = new Evaluator(EvaluationSettings.defaults(), Suggester.defaults(), null);
    Evaluator otherSeed = new Evaluator(EvaluationSettings.defaults().withSeed(2), Suggester.defaults(), null);
    int sampled = 0;
    int differ = 0;
    for (int i = 0; i < 20_000; i++) {
      String id = "kc-" + i;
      assertEquals(one.sampled(id), two.sampled(id));
      sampled += one.sampled(id) ? 1 : 0;
      differ += one.sampled(id) != otherSeed.sampled(id) ? 1 : 0;
    }
    // binomial(20000, 0.1): mean 2000, sd 42
    assertTrue(Math.abs(sampled - 2000) < 200, "sampled " + sampled);
    assertTrue(differ > 2000, "another seed samples other baskets: " + differ);
    assertFalse(new Evaluator(EvaluationSettings.defaults().withShare(0), Suggester.defaults(), null).sampled("kc-1"));
  }

  @Test
  void metricsAndStatusFollowTheTrials() {
    FlooredTable table = trainedTable();
    SimpleMeterRegistry registry = new SimpleMeterRegistry();
    Evaluator evaluator = new Evaluator(ASSOCIATION.withShare(1.0), Suggester.defaults(), null);
    assertTrue(evaluator.summary().isEmpty());
    evaluator.bindTo(registry);
    evaluator.evaluate("x1", T0, List.of("a", "b"), table, table);
    evaluator.evaluate("x2", T0, List.of("p", "q"), table, table);
    assertEquals(2.0, registry.get("pairpulse.evaluation.trials").counter().count());
    assertEquals(0.5, registry.get("pairpulse.evaluation.hit.rate").tag("method", "incremental").tag("k", "10")
        .gauge().value(), 1e-12);
    assertEquals(1.0, registry.get("pairpulse.evaluation.hit.rate").tag("method", "popular").tag("k", "5")
        .gauge().value(), 1e-12);
    assertEquals(0.5, registry.get("pairpulse.evaluation.reciprocal.rank").tag("method", "nightly").gauge().value(),
        1e-12);
    var summary = evaluator.summary().orElseThrow();
    assertEquals(2, summary.baskets());
    assertEquals(10, summary.k());
    assertEquals(0.5, summary.hitRate(), 1e-12);
    assertEquals("recent", summary.horizon());
  }

  @Test
  void anEvaluatorWithoutLogKeepsTheSameTotals() {
    FlooredTable table = trainedTable();
    List<Trial> logged = new java.util.ArrayList<>();
    List<Trial> unlogged = new java.util.ArrayList<>();
    Evaluator withLog = new Evaluator(ASSOCIATION.withShare(1.0), Suggester.defaults(), logged::add);
    Evaluator withoutLog = Evaluator.withoutLog(ASSOCIATION.withShare(1.0), Suggester.defaults(), unlogged::add);
    List<List<String>> baskets = List.of(List.of("a", "b"), List.of("p", "q"), List.of("a", "b", "c"), List.of("a"));
    for (int i = 0; i < baskets.size(); i++) {
      withLog.evaluate("w" + i, T0 + i, baskets.get(i), table, table);
      withoutLog.evaluate("w" + i, T0 + i, baskets.get(i), table, table);
    }
    assertEquals(logged, unlogged, "the same trials");
    assertEquals(withLog.trials(), withoutLog.trials());
    assertEquals(withLog.summary(), withoutLog.summary());
    assertEquals(withLog.tally(EvaluationMethod.INCREMENTAL).hitRate(10), withoutLog.summary().orElseThrow().hitRate(),
        1e-12);
    assertThrows(IllegalStateException.class, () -> withoutLog.tally(EvaluationMethod.POPULAR));
    assertThrows(IllegalStateException.class, withoutLog::days);
  }
}
