package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.stat.inference.GTest;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairCounts;

/** The two-rate G² test against an independent implementation and its invariances. */
class DriftStatisticsTest {

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
    PairCounts baselineExact = PairCounts.exact(20_000, 1000, 1000, 100); // lift 2
    PairCounts recentExact = PairCounts.exact(1000, 50, 50, 15); // lift 6
    double point = DriftStatistics.conservativeRootG2(recentExact, baselineExact);
    PairCounts recentLoose = new PairCounts(1000, Estimate.exact(50), Estimate.exact(50), new Estimate(15, 9, 15));
    PairCounts baselineLoose = new PairCounts(20_000, Estimate.exact(1000), Estimate.exact(1000),
        new Estimate(100, 100, 130));
    double loose = DriftStatistics.conservativeRootG2(recentLoose, baselineLoose);
    assertTrue(point > 0 && loose > 0 && loose < point, point + " vs " + loose);
    // bounds wide enough to flip the direction leave no evidence at all
    PairCounts recentVague = new PairCounts(1000, Estimate.exact(50), Estimate.exact(50), new Estimate(15, 0, 15));
    PairCounts baselineVague = new PairCounts(20_000, Estimate.exact(1000), Estimate.exact(1000),
        new Estimate(100, 100, 900));
    assertEquals(0.0, DriftStatistics.conservativeRootG2(recentVague, baselineVague));
  }
}
