package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.stat.inference.GTest;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairCounts;

/** The two-rate G² test against an independent implementation and its invariances. */
class DriftStatisticsTest {

  @Test
  void rootForTestsKeepsTheFalseAlarmBoundOfOneTest() {
    // Bonferroni: k tests at root r_k have the false-alarm bound of one test at r: 2 (1 − Φ(r_k)) = 2 (1 − Φ(r)) / k,
    // with Φ from Apache Commons Math 3.6.1 NormalDistribution (inverse cumulative probability)
    org.apache.commons.math3.distribution.NormalDistribution normal =
        new org.apache.commons.math3.distribution.NormalDistribution();
    for (double root : new double[] {3.0, 5.0, 6.0}) {
      assertEquals(root, DriftStatistics.rootForTests(root, 1), 0.0);
      for (int tests : new int[] {2, 3, 10}) {
        double expected = normal.inverseCumulativeProbability(1 - (1 - normal.cumulativeProbability(root)) / tests);
        double actual = DriftStatistics.rootForTests(root, tests);
        assertEquals(expected, actual, 1e-6 * root, root + " for " + tests + " tests");
        assertTrue(actual > root);
        assertEquals(DriftStatistics.pValue(root) / tests, DriftStatistics.pValue(actual),
            1e-6 * DriftStatistics.pValue(root));
      }
    }
    assertEquals(5.13, DriftStatistics.rootForTests(5.0, 2), 0.005);
  }

  @Test
  void agreesWithCommonsMathGoodnessOfFit() {
    // Apache Commons Math 3.6.1 GTest.g(expected, observed): the G-test of goodness of fit; conditional on
    // T = x + y, (x, y) is tested against the expected split T·(Ex, Ey)/(Ex + Ey)
    long[][] cases = {{30, 50}, {5, 200}, {120, 80}, {1, 1}};
    double[][] exposures = {{10, 40}, {3, 50}, {60, 90}, {2, 2}};
    for (int i = 0; i < cases.length; i++) {
      long x = cases[i][0];
      long y = cases[i][1];
      double ex = exposures[i][0];
      double ey = exposures[i][1];
      double total = x + y;
      double[] expected = {total * ex / (ex + ey), total * ey / (ex + ey)};
      double oracle = new GTest().g(expected, new long[] {x, y});
      double root = DriftStatistics.signedRootG2(x, ex, y, ey);
      assertEquals(oracle, root * root, 1e-9 * Math.max(1, oracle), "case " + i);
      assertEquals(x / ex >= y / ey, root >= 0, "sign of case " + i);
    }
    // x = 0 (Commons Math gives NaN for 0·ln 0): by hand, G² = 2·40·ln(40 / (40·0.9))
    assertEquals(-Math.sqrt(80 * Math.log(1 / 0.9)), DriftStatistics.signedRootG2(0, 1, 40, 9), 1e-12);
  }

  @Test
  void aPopularityChangeAloneIsNoDrift() {
    // the recent exposure doubles (a flash sale doubles n_a) and the pair count doubles with it: same lift
    assertEquals(0.0, DriftStatistics.signedRootG2(40, 20, 200, 100), 1e-12);
    // a common scale of the exposures (decayed units) changes nothing
    assertEquals(DriftStatistics.signedRootG2(40, 10, 200, 100), DriftStatistics.signedRootG2(40, 1, 200, 10), 1e-12);
  }

  @Test
  void degenerateInputs() {
    assertEquals(0.0, DriftStatistics.signedRootG2(0, 5, 0, 5));
    assertTrue(Double.isNaN(DriftStatistics.signedRootG2(3, 0, 4, 5)));
    assertEquals(0.05, DriftStatistics.pValue(1.959963984540054), 1e-9);
    assertEquals(1.0, DriftStatistics.pValue(0), 1e-15);
  }

  @Test
  void sketchBoundsWeakenTheEvidence() {
    PairCounts referenceExact = PairCounts.exact(20_000, 1000, 1000, 100); // rate 0.005
    PairCounts recentExact = PairCounts.exact(1000, 50, 50, 15); // rate 0.015
    double point = DriftStatistics.rateRootG2(recentExact, 1, referenceExact, 1);
    PairCounts recentLoose = new PairCounts(1000, Estimate.exact(50), Estimate.exact(50), new Estimate(15, 9, 15));
    PairCounts referenceLoose = new PairCounts(20_000, Estimate.exact(1000), Estimate.exact(1000),
        new Estimate(100, 100, 130));
    double loose = DriftStatistics.rateRootG2(recentLoose, 1, referenceLoose, 1);
    assertTrue(point > 0 && loose > 0 && loose < point, point + " vs " + loose);
    // bounds wide enough to flip the direction leave no evidence at all
    PairCounts recentVague = new PairCounts(1000, Estimate.exact(50), Estimate.exact(50), new Estimate(15, 0, 15));
    PairCounts referenceVague = new PairCounts(20_000, Estimate.exact(1000), Estimate.exact(1000),
        new Estimate(100, 100, 900));
    assertEquals(0.0, DriftStatistics.rateRootG2(recentVague, 1, referenceVague, 1));
    assertEquals(0.0, DriftStatistics.associationRootG2(recentVague, 1, referenceVague, 1));
  }

  @Test
  void aPairFromNothingIsEvidenceWhenTheSketchBoundsItsPastNearZero() {
    // before admission the pair is a count-min estimate: [0, 40] over 200,000 baskets; now 120 of 10,000
    PairCounts reference = new PairCounts(200_000, Estimate.exact(4000), Estimate.exact(3000), new Estimate(10, 0, 40));
    PairCounts recent = PairCounts.exact(10_000, 300, 250, 120);
    assertTrue(DriftStatistics.rateRootG2(recent, 1, reference, 1) > 10);
    assertTrue(DriftStatistics.associationRootG2(recent, 1, reference, 1) > 10);
    // the margins cap the bound: an item bought 5 times before bounds the pair by 5 whatever the sketch says
    PairCounts riding = new PairCounts(200_000, Estimate.exact(4000), Estimate.exact(5), new Estimate(0, 0, 900));
    PairCounts ridingNow = PairCounts.exact(10_000, 300, 130, 120);
    assertTrue(DriftStatistics.rateRootG2(ridingNow, 1, riding, 1) > 10);
  }

  @Test
  void interactionTestMatchesATextbookTableAndASlowFit() {
    // Agresti, An Introduction to Categorical Data Analysis (Wiley), the death-penalty table of Radelet and
    // Pierce (Florida): white victims: white defendants 19 death / 132 not, black defendants 11 / 52; black
    // victims: white defendants 0 / 9, black defendants 6 / 97. The homogeneous-association model (DV, DP, PV)
    // has G² = 0.70 and X² = 0.38 on 1 df (figures from memory; the slow fit below gives 0.7007).
    double root = DriftStatistics.interactionRootG2(19, 132, 11, 52, 0, 9, 6, 97);
    assertEquals(0.70, root * root, 0.005);
    assertEquals(SlowInteractionFit.gSquared(new double[] {19, 132, 11, 52, 0, 9, 6, 97}), root * root, 1e-9);
    // the symmetric roles: swapping the strata flips the sign only
    assertEquals(-root, DriftStatistics.interactionRootG2(0, 9, 6, 97, 19, 132, 11, 52), 1e-9);
    java.util.Random random = new java.util.Random(7);
    for (int trial = 0; trial < 200; trial++) {
      double[] cells = new double[8];
      for (int i = 0; i < 8; i++) {
        cells[i] = random.nextInt(trial % 3 == 0 ? 8 : 400) + (i % 4 == 3 ? 500 : 0);
      }
      if (cells[0] + cells[1] == 0 || cells[0] + cells[2] == 0 || cells[4] + cells[5] == 0 || cells[4] + cells[6] == 0) {
        continue;
      }
      double fast = DriftStatistics.interactionRootG2(cells[0], cells[1], cells[2], cells[3], cells[4], cells[5],
          cells[6], cells[7]);
      double slow = SlowInteractionFit.gSquared(cells);
 // IPF crawls on tables with empty cells: 1e-4 absolute
      assertEquals(slow, fast * fast, Math.max(1e-4, 1e-6 * slow), "trial " + trial + " " + java.util.Arrays.toString(cells));
      double oddsFirst = (cells[0] + 0.5) * (cells[3] + 0.5) / ((cells[1] + 0.5) * (cells[2] + 0.5));
      double oddsSecond = (cells[4] + 0.5) * (cells[7] + 0.5) / ((cells[5] + 0.5) * (cells[6] + 0.5));
      if (slow > 4 && Math.abs(Math.log(oddsFirst / oddsSecond)) > 0.5) {
        assertEquals(oddsFirst > oddsSecond, fast > 0, "sign, trial " + trial);
      }
    }
  }

  @Test
  void interactionPValueAgreesWithCommonsMathChiSquared() {
    double root = DriftStatistics.interactionRootG2(19, 132, 11, 52, 0, 9, 6, 97);
    double oracle = 1 - new org.apache.commons.math3.distribution.ChiSquaredDistribution(1).cumulativeProbability(
        root * root);
    assertEquals(oracle, DriftStatistics.pValue(root), 1e-12);
  }

  @Test
  void popularityMovesTheRateButNotTheAssociation() {
    // item a sells three times as much: 4,000 more buyers of a, who take b as often as a's buyers did (5 %), so
    // n_ab and n_b rise by 200 and the odds ratio stays (300·93,100 / (5,700·900) = 5.44 against 5.68)
    PairCounts reference = PairCounts.exact(100_000, 2000, 1000, 100);
    PairCounts recent = PairCounts.exact(100_000, 6000, 1200, 300 - 2); // 300 minus sampling noise
    assertTrue(DriftStatistics.rateRootG2(recent, 1, reference, 1) > 8);
    double association = DriftStatistics.associationRootG2(recent, 1, reference, 1);
    assertTrue(Math.abs(association) < 2, "association " + association);
    assertTrue(DriftStatistics.associationShownUnchanged(recent, 1, reference, 1, 1, 1.5));
    assertFalse(DriftStatistics.associationShownUnchanged(recent, 1, reference, 1, 3, 1.2), "not that narrow");
    // lift is unchanged too, but lift fails the next case: both items ride on the pair, bought mostly with it
    PairCounts ridingBefore = PairCounts.exact(100_000, 100, 30, 20);
    PairCounts ridingNow = PairCounts.exact(100_000, 700, 650, 600);
    double liftBefore = 100_000.0 * 20 / (100 * 30);
    double liftNow = 100_000.0 * 600 / (700 * 650);
    assertTrue(liftNow < liftBefore / 4, "lift falls from 667 to 132 while the pair sells 30 times as often");
    assertTrue(DriftStatistics.rateRootG2(ridingNow, 1, ridingBefore, 1) > 20);
    // the odds ratio rises (2,497 to 11,862): its direction agrees with the rate
    assertTrue(DriftStatistics.logOddsRatioRatio(ridingNow, 1, ridingBefore, 1) > Math.log(3));
    assertTrue(DriftStatistics.associationRootG2(ridingNow, 1, ridingBefore, 1) > 0);
  }

  @Test
  void effectiveCountFactorMatchesKishOnASteadyStream() {
    long halfLife = 6 * 3_600_000L;
    for (long ageHours : new long[] {0, 1, 6, 24, 200}) {
      double lambda = Math.log(2) / halfLife;
      double sum = 0;
      double squares = 0;
      long step = 60_000;
      for (long t = 0; t <= ageHours * 3_600_000L; t += step) {
        double w = Math.exp(-lambda * t);
        sum += w;
        squares += w * w;
      }
      double kishPerCount = sum / squares; // (Σw)²/Σw² per Σw
      assertEquals(kishPerCount, DriftStatistics.effectiveCountFactor(halfLife, ageHours * 3_600_000L),
          0.01 * kishPerCount, "age " + ageHours + " h");
    }
    assertEquals(1.0, DriftStatistics.effectiveCountFactor(0, 1_000_000));
  }

  @Test
  void theReferenceWithoutTheRecentHoursMatchesItsWeightsOnAStream() {
    // a slow oracle: per-basket weights of a 7-day decay less a 6-hour decay, summed over a stream whose pair
    // rate jumps for the last 5 hours; the difference of the two decays' sums is the sum of the differences
    long hour = 3_600_000L;
    long longHalf = 168 * hour;
    long shortHalf = 6 * hour;
    double sumLong = 0;
    double sumShort = 0;
    double sumDifference = 0;
    double pairLong = 0;
    double pairShort = 0;
    double pairDifference = 0;
    long now = 96 * hour;
    for (long t = 0; t < now; t += 60_000) {
      double age = now - t;
      double wl = Math.pow(2, -age / longHalf);
      double ws = Math.pow(2, -age / shortHalf);
      double pair = t >= now - 5 * hour ? 0.3 : 0.01;
      sumLong += wl;
      sumShort += ws;
      sumDifference += wl - ws;
      pairLong += pair * wl;
      pairShort += pair * ws;
      pairDifference += pair * (wl - ws);
    }
    PairCounts longer = new PairCounts(sumLong, Estimate.exact(sumLong / 2), Estimate.exact(sumLong / 3),
        Estimate.exact(pairLong));
    PairCounts shorter = new PairCounts(sumShort, Estimate.exact(sumShort / 2), Estimate.exact(sumShort / 3),
        Estimate.exact(pairShort));
    PairCounts reference = DriftStatistics.excluding(longer, shorter);
    assertEquals(sumDifference, reference.baskets(), 1e-6 * sumDifference);
    assertEquals(pairDifference, reference.countAB().value(), 1e-6 * pairDifference);
    // the jump is mostly out of the reference: its rate stays near the old one, the long decay's does not
    double oldRate = 0.01;
    assertTrue(reference.countAB().value() / reference.baskets() < 1.5 * oldRate);
    assertTrue(pairLong / sumLong > 2 * oldRate);
    // bounds: opposite bounds subtract
    PairCounts loose = DriftStatistics.excluding(new PairCounts(1000, Estimate.exact(100), Estimate.exact(100),
        new Estimate(50, 40, 60)), new PairCounts(200, Estimate.exact(20), Estimate.exact(20), new Estimate(10, 8, 12)));
    assertEquals(new Estimate(40, 28, 52), loose.countAB());
    // the effective-count factor of the difference weights against Kish's (Σw)²/Σw² per Σw
    double kishPerCount = 0;
    double sw = 0;
    double sw2 = 0;
    for (long t = 0; t < now; t += 60_000) {
      double age = now - t;
      double w = Math.pow(2, -age / longHalf) - Math.pow(2, -age / shortHalf);
      sw += w;
      sw2 += w * w;
    }
    kishPerCount = sw / sw2;
    assertEquals(kishPerCount, DriftStatistics.effectiveCountFactor(longHalf, shortHalf, now), 0.01 * kishPerCount);
  }
}
