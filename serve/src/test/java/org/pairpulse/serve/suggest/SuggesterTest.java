package org.pairpulse.serve.suggest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairTable;

/**
 * Suggestions on small tables checked by hand. N = 1000 baskets in every horizon; shrunk lift
 * (n_ab + 10) / (n_a·n_b/N + 10) with the default prior of 10 baskets.
 */
class SuggesterTest {
  private static final double EPS = 1e-12;
  private final Suggester suggester = Suggester.defaults();

  /** a:100 b:200 c:50 d:400 x:80 e:100; ab 40, ac 40, ad 10, xb 32, xe 30, xc 2. */
  private static Tables shop() {
    return Tables.defaultHorizons().baskets(1000)
        .item("a", 100).item("b", 200).item("c", 50).item("d", 400).item("x", 80).item("e", 100)
        .pair("a", "b", 40).pair("a", "c", 40).pair("a", "d", 10)
        .pair("x", "b", 32).pair("x", "e", 30).pair("x", "c", 2);
  }

  private static FlooredTable open(PairTable table) {
    return FlooredTable.of(table, CohortFloor.none());
  }

  @Test
  void oneItemInBandRankedByShrunkLift() {
    SuggestionResult result = suggester.suggest(open(shop().build(1)), SuggestionRequest.of("a"));
    // c: conf a⇒c = 40/100 = 0.4, E = 100·50/1000 = 5, shrunk = 50/15 = 10/3
    // b: conf a⇒b = 0.4, E = 20, shrunk = 50/30 = 5/3
    // d: conf a⇒d = 0.1, below the 0.30 band: not eligible
    assertEquals(List.of("c", "b"), result.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(10.0 / 3), result.suggestions().get(0).score(), EPS);
    assertEquals(Math.log(5.0 / 3), result.suggestions().get(1).score(), EPS);
    Evidence evidence = result.suggestions().get(1).evidence().get(0);
    assertEquals("a", evidence.basketItem());
    assertEquals("recent", evidence.horizon());
    assertEquals("shrunk_lift", evidence.measure());
    assertEquals(0.4, evidence.confidence(), EPS);
    assertEquals(0.04, evidence.support(), EPS);
    assertEquals(2.0, evidence.lift(), EPS); // 1000·40 / (100·200)
    assertTrue(evidence.liftLower() < 2.0 && evidence.liftUpper() > 2.0);
    assertTrue(evidence.inBand());
    assertEquals(1, result.tableVersion());
  }

  @Test
  void twoItemsSumTheirLogShrunkLifts() {
    SuggestionResult result = suggester.suggest(open(shop().build(1)), SuggestionRequest.of("x", "a"));
    // c: ln(10/3) from a, plus x⇒c: E = 80·50/1000 = 4, shrunk = 12/14 (repelling evidence lowers the score)
    // b: ln(5/3) from a + ln(42/26) from x (E = 80·200/1000 = 16)
    // e: from x only: E = 8, shrunk = 40/18, conf x⇒e = 30/80 = 0.375
    assertEquals(List.of("c", "b", "e"), result.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(10.0 / 3) + Math.log(12.0 / 14), result.suggestions().get(0).score(), EPS);
    assertEquals(Math.log(5.0 / 3) + Math.log(42.0 / 26), result.suggestions().get(1).score(), EPS);
    assertEquals(Math.log(40.0 / 18), result.suggestions().get(2).score(), EPS);
    assertEquals(List.of("a", "x"), result.basket());
    // the evidence names both basket items, largest contribution first, and marks x⇒c as outside the band
    List<Evidence> forC = result.suggestions().get(0).evidence();
    assertEquals(List.of("a", "x"), forC.stream().map(Evidence::basketItem).toList());
    assertFalse(forC.get(1).inBand());
    assertEquals(Math.log(12.0 / 14), forC.get(1).contribution(), EPS);
  }

  @Test
  void basketOrderAndDuplicatesDoNotMatter() {
    FlooredTable table = open(shop().build(1));
    assertEquals(suggester.suggest(table, SuggestionRequest.of("a", "x")),
        suggester.suggest(table, SuggestionRequest.of("x", "a", "x")));
  }

  @Test
  void basketItemsAreNeverSuggested() {
    SuggestionResult result = suggester.suggest(open(shop().build(1)),
        SuggestionRequest.of("a", "b").withConfidenceBand(0, 1));
    assertTrue(result.suggestions().stream().noneMatch(s -> s.item().equals("a") || s.item().equals("b")));
    assertFalse(result.suggestions().isEmpty());
  }

  @Test
  void confidenceMeasureIsDirectedAndAdds() {
    SuggestionResult result = suggester.suggest(open(shop().build(1)),
        SuggestionRequest.of("a", "x").withMeasure(Measure.CONFIDENCE));
    // b: a⇒b 0.4 + x⇒b 32/80 = 0.4; c: a⇒c 0.4 + x⇒c 2/80; e: x⇒e 0.375
    assertEquals(List.of("b", "c", "e"), result.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(0.8, result.suggestions().get(0).score(), EPS);
    assertEquals(0.4 + 0.025, result.suggestions().get(1).score(), EPS);
  }

  @Test
  void bandAndSupportFloorDecideEligibility() {
    FlooredTable table = open(shop().build(1));
    // widening the band makes d eligible (a⇒d has confidence 0.1) where the band alone decides (posterior ranking);
    // an offer list never holds it: {a, d} is far below independence (lift 0.25), not an association
    assertTrue(suggester.suggest(table, SuggestionRequest.of("a").withConfidenceBand(0.05, 0.6)
        .withRanking(SuggestionRanking.POSTERIOR)).suggestions().stream().anyMatch(s -> s.item().equals("d")));
    assertTrue(suggester.suggest(table, SuggestionRequest.of("a").withConfidenceBand(0.05, 0.6)).suggestions()
        .stream().noneMatch(s -> s.item().equals("d")));
    // support of ab and ac is 0.04: a floor of 0.05 leaves nothing
    assertTrue(suggester.suggest(table, SuggestionRequest.of("a").withMinSupport(0.05)).suggestions().isEmpty());
  }

  @Test
  void bundlePairsAreLeftOutUnlessAsked() {
    // phone⇒case 96/100, case⇒phone 96/98: both ≥ 0.95, a bundle pair; phone⇒charger 45/100
    PairTable table = Tables.defaultHorizons().baskets(1000).item("phone", 100).item("case", 98)
        .item("charger", 300).pair("phone", "case", 96).pair("phone", "charger", 45).build(1);
    SuggestionRequest request = SuggestionRequest.of("phone");
    assertEquals(List.of("charger"), suggester.suggest(open(table), request).suggestions().stream()
        .map(Suggestion::item).toList());
    assertEquals(List.of("case", "charger"), suggester.suggest(open(table),
        request.withIncludeBundles(true).withConfidenceBand(0, 1)).suggestions().stream().map(Suggestion::item).toList());
    // without includeBundles, even a full band keeps the bundle out
    assertEquals(List.of("charger"), suggester.suggest(open(table), request.withConfidenceBand(0, 1)).suggestions()
        .stream().map(Suggestion::item).toList());
  }

  @Test
  void unknownItemsGiveAnEmptyWellFormedAnswer() {
    FlooredTable table = open(shop().build(1));
    SuggestionResult result = suggester.suggest(table, SuggestionRequest.of("nope", "never"));
    assertTrue(result.suggestions().isEmpty());
    assertEquals(List.of("never", "nope"), result.unknownItems());
    SuggestionResult mixed = suggester.suggest(table, SuggestionRequest.of("a", "nope"));
    assertEquals(List.of("nope"), mixed.unknownItems());
    assertEquals(2, mixed.suggestions().size());
    assertTrue(suggester.suggest(table, SuggestionRequest.of("a").withHorizon("no-such")).suggestions().isEmpty());
    assertTrue(suggester.suggest(open(PairTable.empty()), SuggestionRequest.of("a")).suggestions().isEmpty());
  }

  @Test
  void countLimitsAndTiesBreakByItemId() {
    // b1, b2, b3 identical to a: same score, so the order is by id
    PairTable table = Tables.defaultHorizons().baskets(1000).item("a", 100).item("b3", 100).item("b1", 100)
        .item("b2", 100).pair("a", "b3", 40).pair("a", "b1", 40).pair("a", "b2", 40).build(1);
    SuggestionResult two = suggester.suggest(open(table), SuggestionRequest.of("a").withCount(2));
    assertEquals(List.of("b1", "b2"), two.suggestions().stream().map(Suggestion::item).toList());
  }

  @Test
  void scanLimitReadsOnlyTheBestNeighbours() {
    SuggestionResult result = new Suggester(1).suggest(open(shop().build(1)), SuggestionRequest.of("a"));
    assertEquals(List.of("c"), result.suggestions().stream().map(Suggestion::item).toList());
  }

  @Test
  void cohortFloorHidesThinPairs() {
    // ab has 40 baskets (< 50), ac has 60: only c may be suggested under the default floor
    PairTable table = Tables.defaultHorizons().baskets(1000).item("a", 100).item("b", 200).item("c", 150)
        .pair("a", "b", 40).pair("a", "c", 60).build(1);
    FlooredTable floored = FlooredTable.of(table, CohortFloor.defaults());
    SuggestionResult result = suggester.suggest(floored, SuggestionRequest.of("a").withConfidenceBand(0, 1));
    assertEquals(List.of("c"), result.suggestions().stream().map(Suggestion::item).toList());
  }

  @Test
  void posteriorRankingAddsLogSupportAndFlipsTheOrder() {
    FlooredTable table = open(shop().build(1));
    SuggestionRequest posterior = SuggestionRequest.of("a").withRanking(SuggestionRanking.POSTERIOR);
    // in the band (a⇒b, a⇒c at 0.4): b = ln(0.2 · 5/3) = ln(1/3) beats c = ln(0.05 · 10/3) = ln(1/6),
    // the reverse of the association ranking (c first, see above)
    SuggestionResult result = suggester.suggest(table, posterior);
    assertEquals(List.of("b", "c"), result.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(0.2) + Math.log(5.0 / 3), result.suggestions().get(0).score(), EPS);
    assertEquals(Math.log(0.05) + Math.log(10.0 / 3), result.suggestions().get(1).score(), EPS);
    // without a band: d = ln(0.4 · 20/50) = ln 0.16, then e and x, which no pair with a reaches, as independent
    // items: their score is their log support alone and they carry no evidence
    SuggestionResult open = suggester.suggest(table, posterior.withConfidenceBand(0, 1));
    assertEquals(List.of("b", "c", "d", "e", "x"), open.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(0.16), open.suggestions().get(2).score(), EPS);
    assertEquals(Math.log(0.1), open.suggestions().get(3).score(), EPS);
    assertEquals(Math.log(0.08), open.suggestions().get(4).score(), EPS);
    assertTrue(open.suggestions().get(3).evidence().isEmpty());
    // the count cuts the independent items first: they come last here
    assertEquals(List.of("b", "c", "d"), suggester.suggest(table, posterior.withConfidenceBand(0, 1).withCount(3))
        .suggestions().stream().map(Suggestion::item).toList());
  }

  @Test
  void posteriorWithRawLiftIsBayesRule() {
    // Bayes' rule: ln s(c) + ln lift(x, c) = ln(n_c/N · N·n_xc/(n_x·n_c)) = ln(n_xc / n_x) = ln P(c | x), the
    // confidence x ⇒ c, for a single basket item; with two items the naive-Bayes product adds the second log lift
    FlooredTable table = open(shop().build(1));
    SuggestionRequest request = SuggestionRequest.of("a").withMeasure(Measure.LIFT)
        .withRanking(SuggestionRanking.POSTERIOR).withConfidenceBand(0, 1);
    for (Suggestion s : suggester.suggest(table, request).suggestions()) {
      double expected = switch (s.item()) {
        case "b", "c" -> Math.log(0.4); // 40/100
        case "d" -> Math.log(0.1); // 10/100
        case "e" -> Math.log(0.1); // no pair: independent, P(e | a) = P(e) = 100/1000
        case "x" -> Math.log(0.08);
        default -> throw new AssertionError(s.item());
      };
      assertEquals(expected, s.score(), EPS, s.item());
    }
    // {a, x}: b = ln(200/1000) + ln(1000·40/(100·200)) + ln(1000·32/(80·200)) = ln(0.2 · 2 · 2) = ln 0.8
    Suggestion b = suggester.suggest(table, SuggestionRequest.of("a", "x").withMeasure(Measure.LIFT)
        .withRanking(SuggestionRanking.POSTERIOR).withConfidenceBand(0, 1)).suggestions().stream()
        .filter(s -> s.item().equals("b")).findFirst().orElseThrow();
    assertEquals(Math.log(0.8), b.score(), EPS);
  }

  @Test
  void posteriorKeepsBundlesOutAndReadsOnlyPublishedCounts() {
    PairTable bundles = Tables.defaultHorizons().baskets(1000).item("phone", 100).item("case", 98)
        .item("charger", 300).pair("phone", "case", 96).pair("phone", "charger", 45).build(1);
    SuggestionRequest request = SuggestionRequest.of("phone").withRanking(SuggestionRanking.POSTERIOR)
        .withConfidenceBand(0, 1);
    assertEquals(List.of("charger"), suggester.suggest(open(bundles), request).suggestions().stream()
        .map(Suggestion::item).toList());
    assertEquals(List.of("case", "charger"), suggester.suggest(open(bundles), request.withIncludeBundles(true))
        .suggestions().stream().map(Suggestion::item).toList());
    // under the floor ab (40 baskets) is held back: b is suggested as independent of a, its score owes nothing to
    // the hidden pair; an item under the floor itself is never suggested
    PairTable thin = Tables.defaultHorizons().baskets(1000).item("a", 100).item("b", 200).item("c", 150)
        .item("rare", 20).pair("a", "b", 40).pair("a", "c", 60).build(1);
    SuggestionResult floored = suggester.suggest(FlooredTable.of(thin, CohortFloor.defaults()),
        SuggestionRequest.of("a").withRanking(SuggestionRanking.POSTERIOR).withConfidenceBand(0, 1));
    assertEquals(List.of("c", "b"), floored.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(0.2), floored.suggestions().get(1).score(), EPS);
    assertTrue(floored.suggestions().get(1).evidence().isEmpty());
  }

  @Test
  void posteriorAnswersABasketWithoutPublishedPairsWithThePrior() {
    // no evidence of association: the posterior is the prior, most frequent first (the association ranking says
    // nothing); an item of the basket is never suggested, known or not
    FlooredTable table = open(shop().build(1));
    SuggestionRequest request = SuggestionRequest.of("nope").withRanking(SuggestionRanking.POSTERIOR)
        .withConfidenceBand(0, 1).withCount(3);
    SuggestionResult result = suggester.suggest(table, request);
    assertEquals(List.of("d", "b", "a"), result.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(List.of("nope"), result.unknownItems());
    // {d, nope}: a, d's only neighbour, falls to ln(0.1 · 20/50) = ln 0.04 (d leans away from it), below the
    // independent b (0.2), e (0.1), x (0.08) and c (0.05)
    SuggestionResult withD = suggester.suggest(table, SuggestionRequest.of("d", "nope")
        .withRanking(SuggestionRanking.POSTERIOR).withConfidenceBand(0, 1));
    assertEquals(List.of("b", "e", "x", "c", "a"), withD.suggestions().stream().map(Suggestion::item).toList());
    assertEquals(Math.log(0.04), withD.suggestions().get(4).score(), EPS);
    assertTrue(suggester.suggest(table, SuggestionRequest.of("nope")).suggestions().isEmpty(), "association: nothing");
    // a support floor needs a basket item with a published count: s(x)·s(c) is unknown otherwise
    assertTrue(suggester.suggest(table, request.withMinSupport(0.001)).suggestions().isEmpty());
  }

  @Test
  void requestValidation() {
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of(List.of()));
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of("a", ""));
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of("a").withCount(0));
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of("a").withConfidenceBand(0.7, 0.6));
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of("a").withConfidenceBand(-0.1, 0.6));
    assertThrows(IllegalArgumentException.class, () -> SuggestionRequest.of("a").withMinSupport(1.5));
    assertThrows(IllegalArgumentException.class, () -> new Suggester(0));
    // the posterior needs a lift measure (its terms estimate P(x | c) / P(x))
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
        () -> SuggestionRequest.of("a").withMeasure(Measure.CONFIDENCE).withRanking(SuggestionRanking.POSTERIOR));
    assertTrue(e.getMessage().contains("lift"), e.getMessage());
    assertThrows(IllegalArgumentException.class, () -> SuggestionRanking.fromWireName("popular"));
    assertEquals(SuggestionRanking.POSTERIOR, SuggestionRanking.fromWireName("posterior"));
  }
}
