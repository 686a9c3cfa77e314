package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

class LiftIntervalTest {

  /** A count with random bounds around it, sometimes exact, sometimes with a lower bound of 0. */
  private static Estimate randomEstimate(SplittableRandom random, double value) {
    return switch (random.nextInt(4)) {
      case 0 -> Estimate.exact(value);
      case 1 -> new Estimate(value, 0.0, value * (1 + random.nextDouble()));
      default -> new Estimate(value, value * random.nextDouble(), value * (1 + random.nextDouble()) + random.nextDouble());
    };
  }

  /** Random counts with bounds; the point values are a consistent table (possibly with zero cells). */
  private static PairCounts randomCounts(SplittableRandom random) {
    double scale = Math.pow(10, random.nextInt(5));
    double[] cell = new double[4];
    for (int i = 0; i < 4; i++) {
      cell[i] = random.nextInt(6) == 0 ? 0 : Math.floor(random.nextDouble() * scale) + random.nextInt(3);
    }
    double baskets = cell[0] + cell[1] + cell[2] + cell[3];
    return new PairCounts(baskets, randomEstimate(random, cell[0] + cell[1]),
        randomEstimate(random, cell[0] + cell[2]), randomEstimate(random, cell[0]));
  }

  /** {@code inner} with every bound pushed outward by a random amount (value unchanged). */
  private static Estimate widen(SplittableRandom random, Estimate inner) {
    return new Estimate(inner.value(), inner.lower() * random.nextDouble(),
        inner.upper() * (1 + random.nextDouble()) + random.nextDouble());
  }

  @Test
  void intervalContainsThePointLift() {
    SplittableRandom random = new SplittableRandom(3L);
    int defined = 0;
    for (int i = 0; i < 5000; i++) {
      PairCounts counts = randomCounts(random);
      PairMeasures m = PairMeasures.of(counts);
      if (Double.isNaN(m.lift())) {
        assertTrue(Double.isNaN(m.liftLower()) && Double.isNaN(m.liftUpper()));
        continue;
      }
      defined++;
      assertTrue(m.liftLower() >= 0 && m.liftLower() <= m.lift() && m.lift() <= m.liftUpper(),
          counts + " → " + m);
      assertEquals(m.liftUpper() < 1, m.isRepelling());
    }
    assertTrue(defined > 3000);
  }

  @Test
  void intervalWidensWhenSketchBoundsWiden() {
    SplittableRandom random = new SplittableRandom(5L);
    int strictlyWider = 0;
    for (int i = 0; i < 5000; i++) {
      PairCounts narrow = randomCounts(random);
      PairCounts wide = new PairCounts(narrow.baskets(), widen(random, narrow.countA()),
          widen(random, narrow.countB()), widen(random, narrow.countAB()));
      PairMeasures n = PairMeasures.of(narrow);
      PairMeasures w = PairMeasures.of(wide);
      if (Double.isNaN(n.lift())) {
        continue;
      }
      assertEquals(n.lift(), w.lift(), 0.0); // point values unchanged
      assertTrue(w.liftLower() <= n.liftLower() * (1 + 1e-12), narrow + " / " + wide);
      assertTrue(w.liftUpper() >= n.liftUpper() * (1 - 1e-12), narrow + " / " + wide);
      if (w.liftLower() < n.liftLower() || w.liftUpper() > n.liftUpper()) {
        strictlyWider++;
      }
    }
    assertTrue(strictlyWider > 1000, "strictly wider: " + strictlyWider);
  }

  @Test
  void intervalWidensWithTheConfidenceLevel() {
    PairCounts counts = PairCounts.exact(5_000, 300, 400, 60);
    double previousWidth = 0;
    for (double level : new double[] {0.5, 0.8, 0.95, 0.99, 0.999}) {
      PairMeasures m = PairMeasures.of(counts, new MeasureSettings(level, 10, 0.95));
      double logWidth = Math.log(m.liftUpper()) - Math.log(m.liftLower());
      assertTrue(logWidth > previousWidth, "level " + level);
      previousWidth = logWidth;
    }
  }

  @Test
  void exactCountsGiveTheDeltaMethodInterval() {
    // hand-computed from the documented formula: N 1000, n_a 100, n_b 200, n_ab 40, lift 2,
    // Var(ln lift) = 1/40 − 1/100 − 1/200 + (2·2 − 1)/1000 = 0.013, z = 1.959964 (normal table)
    PairMeasures m = PairMeasures.of(PairCounts.exact(1_000, 100, 200, 40));
    double halfWidth = 1.959964 * Math.sqrt(0.013);
    assertEquals(2 * Math.exp(-halfWidth), m.liftLower(), 1e-5);
    assertEquals(2 * Math.exp(halfWidth), m.liftUpper(), 1e-5);
  }

  @Test
  void sketchBoundsAreCombinedWithTheSamplingFactor() {
    // N 1000; n_a in [90, 110], n_b in [180, 220], n_ab in [35, 45], points 100/200/40 as above.
    // Sketch extremes (hand-computed): lower 1000·35/(110·220), upper 1000·45/(90·180)
    PairCounts counts = new PairCounts(1_000, new Estimate(100, 90, 110), new Estimate(200, 180, 220),
        new Estimate(40, 35, 45));
    PairMeasures m = PairMeasures.of(counts);
    double samplingFactor = Math.exp(1.959964 * Math.sqrt(0.013));
    assertEquals(1000.0 * 35 / (110 * 220) / samplingFactor, m.liftLower(), 1e-5);
    assertEquals(1000.0 * 45 / (90 * 180) * samplingFactor, m.liftUpper(), 1e-5);
  }

  @Test
  void zeroLowerBoundsOfTheMarginsLeaveTheUpperBoundOpen() {
    // n_a may be as small as 0: a ⇒ b could have confidence 1, so lift ≤ N / n_b.lower
    PairCounts oneOpen = new PairCounts(1_000, new Estimate(100, 0, 110), Estimate.exact(200), Estimate.exact(40));
    PairMeasures m = PairMeasures.of(oneOpen);
    assertEquals(1000.0 / 200 * Math.exp(1.959964 * Math.sqrt(0.013)), m.liftUpper(), 1e-5);
    PairCounts bothOpen = new PairCounts(1_000, new Estimate(100, 0, 110), new Estimate(200, 0, 200),
        Estimate.exact(40));
    assertEquals(Double.POSITIVE_INFINITY, PairMeasures.of(bothOpen).liftUpper());
  }

  @ParameterizedTest
  @CsvSource({
    // N, n_a, n_b: the expected pair count n_a·n_b/N decides whether never-together repels
    "1000, 10, 10, false",      // E = 0.1: nothing to see
    "1000, 30, 40, false",      // E = 1.2: still consistent with independence
    "10000, 1000, 1000, true",  // E = 100: zero is far below it
    "10000, 300, 200, true",    // E = 6: above the 3.69 zero-event limit
  })
  void neverTogetherRepelsOnlyWhenTheIntervalSaysSo(double baskets, double countA, double countB,
                           boolean repelling) {
    PairMeasures m = PairMeasures.of(PairCounts.exact(baskets, countA, countB, 0));
    assertEquals(0.0, m.lift());
    assertEquals(0.0, m.liftLower());
    assertTrue(Double.isFinite(m.liftUpper()) && m.liftUpper() > 0);
    // hand-computed: upper count for zero events at two-sided 95% is −ln(0.025) = 3.689
    // (exact Poisson limit; the one-sided 95% "rule of three" is −ln 0.05 ≈ 3, Hanley &
    // Lippman-Hand 1983, from memory), so the upper lift is N·3.689/(n_a·n_b)
    assertEquals(baskets * 3.6889 / (countA * countB), m.liftUpper(), 1e-3 * m.liftUpper());
    assertEquals(repelling, m.isRepelling(), m::toString);
  }

  @Test
  void seeingThePairOnceRaisesTheUpperBound() {
    // sanity: seeing the pair once gives a larger upper bound than never seeing it (fixed margins)
    PairMeasures zero = PairMeasures.of(PairCounts.exact(10_000, 300, 200, 0));
    PairMeasures one = PairMeasures.of(PairCounts.exact(10_000, 300, 200, 1));
    assertTrue(one.liftUpper() > zero.liftUpper());
    assertFalse(one.isRepelling());
  }

  /**
   * Coverage on a seeded simulation: baskets drawn independently from a known 2×2 distribution,
   * the 95% interval (exact counts, so sampling error only) should cover the true lift about 95%
   * of the time. 2000 replicates: binomial standard error 0.005, accepted band 0.93–0.97.
   */
  @ParameterizedTest
  @CsvSource({
    // N, P(a), P(b), P(a and b)
    "2000, 0.2, 0.3, 0.10",   // lift 1.67, n_ab ≈ 200
    "2000, 0.2, 0.3, 0.06",   // independent, n_ab ≈ 120
    "5000, 0.05, 0.04, 0.01", // lift 5, n_ab ≈ 50
    "4000, 0.3, 0.4, 0.06",   // lift 0.5, n_ab ≈ 240
    "500, 0.05, 0.04, 0.01",  // lift 5, n_ab ≈ 5: thin evidence
    "10000, 0.5, 0.5, 0.4",   // lift 1.6 with common items: the lift = 1 variance would collapse here
  })
  void ninetyFivePercentIntervalCoversTheTrueLift(int baskets, double pA, double pB, double pAB) {
    double trueLift = pAB / (pA * pB);
    SplittableRandom random = new SplittableRandom(Double.doubleToLongBits(pAB) ^ baskets);
    int replicates = 2000;
    int covered = 0;
    for (int r = 0; r < replicates; r++) {
      int countA = 0;
      int countB = 0;
      int countAB = 0;
      for (int i = 0; i < baskets; i++) {
        double u = random.nextDouble();
        boolean both = u < pAB;
        boolean onlyA = !both && u < pA;
        boolean onlyB = !both && !onlyA && u < pA + pB - pAB;
        countA += both || onlyA ? 1 : 0;
        countB += both || onlyB ? 1 : 0;
        countAB += both ? 1 : 0;
      }
      PairMeasures m = PairMeasures.of(PairCounts.exact(baskets, countA, countB, countAB));
      if (m.liftLower() <= trueLift && trueLift <= m.liftUpper()) {
        covered++;
      }
    }
    double coverage = (double) covered / replicates;
    assertTrue(coverage >= 0.93 && coverage <= 0.97, "coverage " + coverage);
  }
}
