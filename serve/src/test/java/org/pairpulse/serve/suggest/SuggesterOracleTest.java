package org.pairpulse.serve.suggest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.InventedStream;
import org.pairpulse.serve.fixtures.KestrelShop;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairTable;

/**
 * The indexed {@link Suggester} against the slow, obvious {@link SimpleSuggester}: equal answers
 * (scores to the last bit, evidence, order) for random baskets and options over a real engine's table.
 */
class SuggesterOracleTest {
  private static final Measure[] LIFT_MEASURES = {Measure.LIFT, Measure.SHRUNK_LIFT, Measure.LIFT_LOWER};

  @Test
  void indexedSuggesterEqualsTheOracle() {
    InventedStream stream = KestrelShop.stream(3);
    stream.feed(InventedStream.T0, KestrelShop.END, 40_000);
    PairTable table = stream.refresh(1);
    SplittableRandom random = new SplittableRandom(5);
    List<String> items = new ArrayList<>(KestrelShop.CATALOG);
    items.addAll(List.of("pack-kids", "case-kestrel-9", "handset-kestrel-9", "never-seen"));
    Measure[] measures = Measure.values();
    String[] horizons = {"recent", "day", "baseline", "nope"};
    int nonEmpty = 0;
    int posteriorNonEmpty = 0;
    int independentAnswers = 0;
    for (double floor : new double[] {0, 50}) {
      FlooredTable view = FlooredTable.of(table, CohortFloor.of(floor));
      for (int cap : new int[] {3, 500}) {
        Suggester fast = new Suggester(cap);
        SimpleSuggester oracle = new SimpleSuggester(cap);
        for (int i = 0; i < 400; i++) {
          List<String> basket = new ArrayList<>();
          int size = 1 + random.nextInt(5);
          for (int j = 0; j < size; j++) {
            basket.add(items.get(random.nextInt(items.size())));
          }
          double low = random.nextInt(3) == 0 ? 0 : 0.3 * random.nextDouble();
          SuggestionRequest request = SuggestionRequest.of(basket)
              .withMeasure(measures[random.nextInt(measures.length)])
              .withHorizon(horizons[random.nextInt(horizons.length)])
              .withCount(1 + random.nextInt(12))
              .withConfidenceBand(low, low + (1 - low) * random.nextDouble())
              .withMinSupport(random.nextInt(4) == 0 ? 0.01 : 0)
              .withIncludeBundles(random.nextBoolean());
          if (random.nextInt(3) == 0) { // the posterior ranking, with one of the lift measures it needs
            request = request.withMeasure(LIFT_MEASURES[random.nextInt(LIFT_MEASURES.length)])
                .withRanking(SuggestionRanking.POSTERIOR);
            if (random.nextBoolean()) {
              request = request.withConfidenceBand(0, 1); // no band: independent items may enter
            }
          }
          SuggestionResult expected = oracle.suggest(view, request);
          assertEquals(expected, fast.suggest(view, request), request.toString());
          if (!expected.suggestions().isEmpty()) {
            nonEmpty++;
            if (request.ranking() == SuggestionRanking.POSTERIOR) {
              posteriorNonEmpty++;
              if (expected.suggestions().stream().anyMatch(x -> x.evidence().isEmpty())) {
                independentAnswers++;
              }
            }
          }
        }
      }
    }
    assertTrue(nonEmpty > 200, "the comparison covered real answers: " + nonEmpty);
    assertTrue(posteriorNonEmpty > 50, "the posterior ranking was compared on real answers: " + posteriorNonEmpty);
    assertTrue(independentAnswers > 10, "answers with items that no pair reached: " + independentAnswers);
  }
}
