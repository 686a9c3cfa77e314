package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * The entry routes of {@link DriftFinding} on hand-made periods: each class of change the drift issue lists
 * enters the right kind (or nothing), and never the opposite one.
 */
class DriftFindingTest {
  private static final DriftSettings SETTINGS = DriftSettings.defaults();

  private static PairStats stats(String horizon, PairCounts counts) {
    return new PairStats("a", "b", horizon, counts, PairMeasures.of(counts), 0L);
  }

  private static DriftFinding finding(PairCounts recent, PairCounts reference) {
    return DriftFinding.of(stats("recent", recent), stats("tracking", reference), 1.0, 1.0, SETTINGS);
  }

  private static void assertNothing(DriftFinding f) {
    for (AlertKind kind : AlertKind.values()) {
      assertFalse(f.enters(kind, SETTINGS), kind + " entered: " + f);
    }
  }

  @Test
  void aPopularityMoveOfOneItemEntersNothing() {
    // unassociated pair: item a sells three times as much, b ⊥ a throughout
    assertNothing(finding(PairCounts.exact(10_000, 1500, 400, 61), PairCounts.exact(100_000, 5000, 4000, 200)));
    // associated pair (odds ratio about 5.7 in both periods): a triples, its new buyers take b as often as before
    assertNothing(finding(PairCounts.exact(100_000, 6000, 1200, 300), PairCounts.exact(100_000, 2000, 1000, 100)));
    // the whole shop gets busier (N, n_a, n_b, n_ab all doubled): nothing
    assertNothing(finding(PairCounts.exact(200_000, 4000, 2000, 200), PairCounts.exact(100_000, 2000, 1000, 100)));
  }

  @Test
  void aSpikeInLargerBasketsRaisesTheOddsRatioButNotTheSizeAdjustedLift() {
    // the spike item lands in large baskets: its pairs' textbook odds ratio doubles and their rate rises 14-fold,
    // but within basket-size classes they are as expected (E = n_ab): not associated, nothing enters
    PairCounts reference = PairCounts.exact(100_000, 1000, 10_000, 100).withStratifiedExpected(Estimate.exact(100));
    PairCounts recent = PairCounts.exact(10_000, 800, 1000, 140).withStratifiedExpected(Estimate.exact(140));
    DriftFinding f = finding(recent, reference);
    assertTrue(f.rateRootG2() > 5 && f.oddsRatioRatio() > 1.5, f.toString());
    assertNothing(f);
    // the same counts with an expectation that knows no sizes (textbook E = 80 now) would have entered
    DriftFinding textbook = finding(PairCounts.exact(10_000, 800, 1000, 140), PairCounts.exact(100_000, 1000, 10_000,
        100));
    assertTrue(textbook.enters(AlertKind.EMERGING, SETTINGS), textbook.toString());
  }

  @Test
  void aPairFromNothingAmongPopularItemsEmerges() {
    // before admission: a count-min bound [0, 60] over 300,000 baskets; now 150 of 12,000 baskets
    PairCounts reference = new PairCounts(300_000, Estimate.exact(6000), Estimate.exact(5000), new Estimate(20, 0, 60));
    PairCounts recent = PairCounts.exact(12_000, 360, 300, 150);
    DriftFinding f = finding(recent, reference);
    assertTrue(f.enters(AlertKind.EMERGING, SETTINGS), f.toString());
    assertFalse(f.enters(AlertKind.FADING, SETTINGS));
    assertEquals(DriftChange.BOTH, f.emergingChange(SETTINGS));
  }

  @Test
  void aPairWhoseItemsRideOnItEmergesAndNeverFades() {
    PairCounts before = PairCounts.exact(100_000, 100, 30, 20);
    PairCounts now = PairCounts.exact(100_000, 700, 650, 600); // lift 667 -> 132, rate x30
    DriftFinding f = finding(now, before);
    assertTrue(f.recentLift() < f.baselineLift());
    assertTrue(f.enters(AlertKind.EMERGING, SETTINGS), f.toString());
    assertFalse(f.enters(AlertKind.FADING, SETTINGS));
    // an item rare before and never seen with a (the sketch bounds the pair by the item: at most 4)
    PairCounts rare = new PairCounts(100_000, Estimate.exact(3000), Estimate.exact(4), new Estimate(0, 0, 300));
    DriftFinding g = finding(PairCounts.exact(20_000, 800, 260, 240), rare);
    assertTrue(g.enters(AlertKind.EMERGING, SETTINGS), g.toString());
    assertFalse(g.enters(AlertKind.FADING, SETTINGS));
  }

  @Test
  void aRideOnPairThatStopsFadesAndNeverEmerges() {
    PairCounts during = PairCounts.exact(100_000, 3600, 650, 600);
    PairCounts after = PairCounts.exact(30_000, 900, 12, 8); // b is hardly bought any more, the pair neither
    DriftFinding f = finding(after, during);
    assertTrue(f.enters(AlertKind.FADING, SETTINGS), f.toString());
    assertFalse(f.enters(AlertKind.EMERGING, SETTINGS));
  }

  @Test
  void anAssociationThatEndsFades() {
    // popular items: the pair falls back to independence (lift 4 -> 1) while both items sell as before
    DriftFinding f = finding(PairCounts.exact(20_000, 800, 600, 25), PairCounts.exact(200_000, 8000, 6000, 960));
    assertEquals(DriftChange.BOTH, f.fadingChange(SETTINGS), f.toString());
    assertFalse(f.enters(AlertKind.EMERGING, SETTINGS));
  }

  @Test
  void aRarePairTrapEntersNothing() {
    // a handful of co-occurrences of two rare items, never seen together before
    DriftFinding f = finding(PairCounts.exact(10_000, 5, 6, 3), PairCounts.exact(200_000, 40, 50, 0));
    assertNothing(f);
  }

  @Test
  void aSteadyPairEntersNothingAndANewBundleEntersOnce() {
    assertNothing(finding(PairCounts.exact(10_000, 500, 400, 100), PairCounts.exact(200_000, 10_000, 8000, 2000)));
    // near-certain all along: not a new bundle
    DriftFinding steadyBundle = finding(PairCounts.exact(10_000, 300, 300, 295), PairCounts.exact(200_000, 6000, 6000,
        5800));
    assertTrue(steadyBundle.recentBundle());
    assertFalse(steadyBundle.enters(AlertKind.BUNDLE, SETTINGS));
    DriftFinding newBundle = finding(PairCounts.exact(10_000, 300, 300, 295), PairCounts.exact(200_000, 6000, 6000,
        1200));
    assertTrue(newBundle.enters(AlertKind.BUNDLE, SETTINGS));
    assertNull(newBundle.changeFor(AlertKind.BUNDLE, SETTINGS));
  }

  @Test
  void summariesSayWhatChangedAndTheCountsBehindIt() {
    PairCounts before = PairCounts.exact(100_000, 100, 30, 20);
    PairCounts now = PairCounts.exact(100_000, 700, 650, 600);
    DriftFinding f = finding(now, before);
    String words = DriftWords.summary(AlertKind.EMERGING, f.emergingChange(SETTINGS), f);
    assertTrue(words.contains("bought together ×30 as often per basket"), words);
    assertTrue(words.contains("600 of 100,000 baskets recently against 20 of 100,000"), words);
    // the short scale's counts: the tests read them, the table's gates read the recent horizon, the words say which
    PairCounts hour = PairCounts.exact(20_000, 150, 140, 130);
    DriftFinding shortScale = DriftFinding.of(stats("recent", now), hour, 3_600_000L, stats("tracking", before), before,
        1.0, 1.0, SETTINGS);
    assertEquals(3_600_000L, shortScale.recentHalfLifeMillis());
    assertEquals(130, shortScale.recentPairBaskets());
    assertEquals(f.recentLiftLower(), shortScale.recentLiftLower());
    assertEquals(DriftStatistics.rateRootG2(hour, 1.0, before, 1.0), shortScale.rateRootG2(), 1e-12);
    String hourly = DriftWords.summary(AlertKind.EMERGING, shortScale.emergingChange(SETTINGS), shortScale);
    assertTrue(hourly.contains("130 of 20,000 baskets recently (half-life 1 h) against 20 of 100,000"), hourly);
  }
}
