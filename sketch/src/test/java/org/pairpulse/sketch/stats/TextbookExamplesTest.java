package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;

/**
 * Worked examples from the data-mining textbooks, with answers known in advance. Every figure
 * says where it comes from; "from memory" marks figures recalled rather than read from a document
 * open while writing the test.
 */
class TextbookExamplesTest {

  // Tan, Steinbach & Kumar, "Introduction to Data Mining", 1st ed. (2005), ch. 6, the
  // market-basket transactions table (Table 6.1) — from memory.
  private static final List<Set<String>> TSK_BASKETS = List.of(
      Set.of("Bread", "Milk"),
      Set.of("Bread", "Diapers", "Beer", "Eggs"),
      Set.of("Milk", "Diapers", "Beer", "Cola"),
      Set.of("Bread", "Milk", "Diapers", "Beer"),
      Set.of("Bread", "Milk", "Diapers", "Cola"));

  /** Counts a pair in {@link #TSK_BASKETS} with a plain loop (the oracle). */
  private static PairCounts countPair(String a, String b) {
    int countA = 0;
    int countB = 0;
    int countAB = 0;
    for (Set<String> basket : TSK_BASKETS) {
      boolean hasA = basket.contains(a);
      boolean hasB = basket.contains(b);
      countA += hasA ? 1 : 0;
      countB += hasB ? 1 : 0;
      countAB += hasA && hasB ? 1 : 0;
    }
    return PairCounts.exact(TSK_BASKETS.size(), countA, countB, countAB);
  }

  @Test
  void tanSteinbachKumarDiapersAndBeer() {
    PairMeasures m = PairMeasures.of(countPair("Diapers", "Beer"));
    // TSK 2005 ch. 6 (from memory): support 0.6, c(Diapers ⇒ Beer) = 0.75, c(Beer ⇒ Diapers) = 1.0
    assertSupportAndConfidences(m, 0.6, 0.75, 1.0);
    // lift 1.25 (from memory; = 0.75 / s(Beer) = 0.75 / 0.6)
    assertEquals(1.25, m.lift(), 1e-12);
    // the textbook values by name (without size classes the adjusted ones coincide with them)
    assertEquals(1.25, m.liftUnadjusted(), 1e-12);
    assertEquals(0.12, m.leverageUnadjusted(), 1e-12);
    assertEquals(1.6, m.convictionABUnadjusted(), 1e-12);
    // hand-computed from the definitions: leverage 0.6 − 0.8·0.6 = 0.12; conviction
    // Diapers ⇒ Beer (1 − 0.6)/(1 − 0.75) = 1.6, Beer ⇒ Diapers +∞ (confidence 1);
    // Kulczynski (0.75 + 1)/2 = 0.875; IR |4 − 3|/(4 + 3 − 3) = 0.25
    assertEquals(0.12, m.leverage(), 1e-12);
    assertEquals(1.6, m.convictionAB(), 1e-12);
    assertEquals(Double.POSITIVE_INFINITY, m.convictionBA());
    assertEquals(0.875, m.kulczynski(), 1e-12);
    assertEquals(0.25, m.imbalanceRatio(), 1e-12);
    assertEquals(Double.POSITIVE_INFINITY, Measure.CONVICTION.of(m));
    assertEquals(1.0, Measure.CONFIDENCE.of(m), 1e-12);
    assertFalse(m.isBundle()); // Diapers ⇒ Beer is only 0.75
  }

  @Test
  void tanSteinbachKumarOtherPairsHandComputed() {
    // hand-computed from TSK Table 6.1 (transcribed from memory above):
    // Bread {1,2,4,5}, Milk {1,3,4,5}, both {1,4,5}: support 3/5, confidences 3/4, lift 5·3/16
    PairMeasures breadMilk = PairMeasures.of(countPair("Bread", "Milk"));
    assertSupportAndConfidences(breadMilk, 0.6, 0.75, 0.75);
    assertEquals(0.9375, breadMilk.lift(), 1e-12);
    assertEquals(0.0, breadMilk.imbalanceRatio(), 1e-12);
    // Beer {2,3,4}, Cola {3,5}, both {3}: support 1/5, c(Beer ⇒ Cola) = 1/3, c(Cola ⇒ Beer) = 1/2,
    // lift 5·1/(3·2) = 5/6
    PairMeasures beerCola = PairMeasures.of(countPair("Beer", "Cola"));
    assertSupportAndConfidences(beerCola, 0.2, 1.0 / 3, 0.5);
    assertEquals(5.0 / 6, beerCola.lift(), 1e-12);
    // Eggs {2}, Cola {3,5}: never together: support 0, lift 0, leverage −(1/5)(2/5)
    PairMeasures eggsCola = PairMeasures.of(countPair("Eggs", "Cola"));
    assertEquals(0.0, eggsCola.support());
    assertEquals(0.0, eggsCola.lift());
    assertEquals(-0.08, eggsCola.leverage(), 1e-12);
    assertEquals(0.0, eggsCola.liftLower());
    // five baskets cannot show that a pair seen 0 times out of an expected 0.4 repels
    assertFalse(eggsCola.isRepelling());
  }

  @Test
  void tanSteinbachKumarTeaAndCoffee() {
    // TSK 2005 ch. 6, the tea/coffee contingency table (Table 6.8, from memory):
    // tea∧coffee 150, tea∧¬coffee 50, ¬tea∧coffee 650, ¬tea∧¬coffee 150; N = 1000
    PairMeasures m = PairMeasures.of(PairCounts.exact(1000, 150 + 50, 150 + 650, 150));
    // c(tea ⇒ coffee) = 0.75, high, yet s(coffee) = 0.8: lift 0.9375 (from memory)
    assertEquals(0.75, m.confidenceAB(), 1e-12);
    assertEquals(0.9375, m.lift(), 1e-12);
    // hand-computed: leverage 0.15 − 0.2·0.8 = −0.01, below independence so √G² is negative
    assertEquals(-0.01, m.leverage(), 1e-12);
    assertTrue(m.signedRootGSquared() < 0);
    // conviction tea ⇒ coffee (1 − 0.8)/(1 − 0.75) = 0.8 < 1: the rule is worse than chance
    assertEquals(0.8, m.convictionAB(), 1e-12);
  }

  @Test
  void hanKamberPeiGamesAndVideos() {
    // Han, Kamber & Pei, "Data Mining: Concepts and Techniques", 3rd ed. (2012), §6.3,
    // Examples 6.7–6.9 (figures from memory; the 4000/3500/2000/500 table and
    // 0.40/(0.60 × 0.75) = 0.89 are also reproduced in stats.stackexchange question 138487):
    // 10,000 transactions, 6,000 with games, 7,500 with videos, 4,000 with both
    PairMeasures m = PairMeasures.of(PairCounts.exact(10_000, 6_000, 7_500, 4_000));
    assertEquals(0.40, m.support(), 1e-12);
    assertEquals(0.667, m.confidenceAB(), 0.0005); // "66%" / 0.667 in the book
    assertEquals(0.89, m.lift(), 0.005); // < 1: negatively correlated
    // Example 6.9: χ² = 555.6 (from memory)
    assertEquals(555.6, m.chiSquare(), 0.05);
    // with 10,000 baskets the negative correlation is well outside sampling noise
    assertTrue(m.liftUpper() < 1.0, m::toString);
    assertTrue(m.isRepelling());
  }

  /** One data set of Han, Kamber & Pei 3rd ed. Table 6.9: milk m, coffee c. */
  private record MilkCoffee(String name, double mc, double notMilkCoffee, double milkNotCoffee,
               double neither, double lift, double kulczynski, double chiSquare) {
    PairCounts counts() {
      double baskets = mc + notMilkCoffee + milkNotCoffee + neither;
      return PairCounts.exact(baskets, mc + milkNotCoffee, mc + notMilkCoffee, mc);
    }
  }

  @Test
  void hanKamberPeiNullInvariantMeasures() {
    // Han, Kamber & Pei 2012, §6.3.3, Table 6.9 (cell counts and the printed two-decimal lift,
    // Kulc and χ² values, all from memory; they agree with the definitions to the printed digits)
    List<MilkCoffee> sets = List.of(
        new MilkCoffee("D1", 10_000, 1_000, 1_000, 100_000, 9.26, 0.91, 90_557),
        new MilkCoffee("D2", 10_000, 1_000, 1_000, 100, 1.00, 0.91, 0),
        new MilkCoffee("D3", 100, 1_000, 1_000, 100_000, 8.44, 0.09, 670),
        new MilkCoffee("D4", 1_000, 1_000, 1_000, 100_000, 25.75, 0.50, 24_740),
        new MilkCoffee("D5", 1_000, 100, 10_000, 100_000, 9.18, 0.50, 8_173),
        new MilkCoffee("D6", 1_000, 10, 100_000, 100_000, 1.97, 0.50, 965));
    for (MilkCoffee set : sets) {
      PairMeasures m = PairMeasures.of(set.counts());
      assertEquals(set.lift(), m.lift(), 0.005, set.name() + " lift");
      assertEquals(set.kulczynski(), m.kulczynski(), 0.005, set.name() + " Kulczynski");
      assertEquals(set.chiSquare(), m.chiSquare(), 1.0, set.name() + " chi-square"); // printed as integers
    }
    // Imbalance ratio (same section, from memory): D4 0.0 (balanced), D5 0.89, D6 0.99
    assertEquals(0.0, PairMeasures.of(sets.get(3).counts()).imbalanceRatio(), 0.005);
    assertEquals(0.89, PairMeasures.of(sets.get(4).counts()).imbalanceRatio(), 0.005);
    assertEquals(0.99, PairMeasures.of(sets.get(5).counts()).imbalanceRatio(), 0.005);

    // null invariance (Wu, Chen & Han 2010): D1 and D2 differ only in null transactions
    // (¬m∧¬c), so Kulczynski and IR agree exactly while lift and χ² do not
    PairMeasures d1 = PairMeasures.of(sets.get(0).counts());
    PairMeasures d2 = PairMeasures.of(sets.get(1).counts());
    assertEquals(d1.kulczynski(), d2.kulczynski(), 1e-15);
    assertEquals(d1.imbalanceRatio(), d2.imbalanceRatio(), 1e-15);
    assertTrue(d1.lift() > 9 && Math.abs(d2.lift() - 1) < 0.01);
  }

  private static void assertSupportAndConfidences(PairMeasures m, double support, double confidenceAB,
      double confidenceBA) {
    assertEquals(support, m.support(), 1e-12, "support");
    assertEquals(confidenceAB, m.confidenceAB(), 1e-12, "confidence a => b");
    assertEquals(confidenceBA, m.confidenceBA(), 1e-12, "confidence b => a");
  }
}
