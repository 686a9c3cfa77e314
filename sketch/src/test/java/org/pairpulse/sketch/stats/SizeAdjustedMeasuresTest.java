package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.distribution.PoissonDistribution;
import org.junit.jupiter.api.Test;

/** The stratified expected count, its test, the size classes and the size-adjusted measures. */
class SizeAdjustedMeasuresTest {

  /**
   * Agresti, Categorical Data Analysis, 2nd ed. (2002), section 6.3, the penicillin example (from memory): rabbits
   * infected with streptococci, penicillin given at once or after 1.5 h, cured or died, in five strata of penicillin
   * level. Rows "at once", columns "cured". The book gives CMH = 3.93 (continuity-corrected), P = 0.047; the expected
   * count and variance are hand-computed from the table.
   */
  @Test
  void agrestiPenicillinCochranMantelHaenszel() {
    // per stratum (levels 1/8, 1/4, 1/2, 1, 4): at once cured/died, delayed cured/died
    double[][] strata = {{0, 6, 0, 5}, {3, 3, 0, 6}, {6, 0, 2, 4}, {5, 1, 6, 0}, {2, 0, 5, 0}};
    double[] rows = new double[5];
    double[] cols = new double[5];
    double[] totals = new double[5];
    double observed = 0;
    for (int s = 0; s < 5; s++) {
      double[] t = strata[s];
      rows[s] = t[0] + t[1];
      cols[s] = t[0] + t[2];
      totals[s] = t[0] + t[1] + t[2] + t[3];
      observed += t[0];
    }
    // E = 0 + 6·3/12 + 6·8/12 + 6·11/12 + 2·7/7 = 0 + 1.5 + 4 + 5.5 + 2 = 13; observed 16
    double expected = MantelHaenszel.expected(rows, cols, totals);
    assertEquals(13.0, expected, 1e-12);
    assertEquals(16.0, observed);
    // V = 0 + 6·6·3·9/(144·11) + 6·6·8·4/(144·11) + 6·6·11·1/(144·11) + 0 = 2520/1584
    double variance = MantelHaenszel.variance(rows, cols, totals);
    assertEquals(2520.0 / 1584, variance, 1e-12);
    assertEquals(3.93, MantelHaenszel.chiSquare(observed, expected, variance, true), 0.005);
    assertEquals(9 / variance, MantelHaenszel.chiSquare(observed, expected, variance, false), 1e-12);
    // P(χ²₁ ≥ 3.93) = 0.047 (from memory, as the book reports it)
    assertEquals(0.047, TwoByTwoTable.chiSquareOneDfPValue(MantelHaenszel.chiSquare(observed, expected, variance, true)),
        0.001);
  }

  /**
   * A hand-computed table of baskets by size class: a and b sit in large baskets more than in small ones. Class 1
   * (single items): N 200, a 30, b 30, a pairless class, left out of E. Class 2: N 100, a 10, b 20. Class 6+: N 50,
   * a 40, b 40. So N = 350, n_a = 80, n_b = 90; E = 10·20/100 + 40·40/50 = 2 + 32 = 34. With n_ab = 34 the pair is
   * exactly as frequent as independence within classes predicts, yet its textbook lift is 350·34/(80·90) = 1.653.
   */
  @Test
  void theSizeEffectAndItsAdjustmentOnAHandComputedTable() {
    SizeClasses classes = SizeClasses.of(1, 2, 3, 6);
    assertTrue(classes.pairless(0));
    double[] a = {0, 10, 0, 40};
    double[] b = {0, 20, 0, 40};
    double[] baskets = {200, 100, 0, 50}; // the pairless class contributes nothing
    double expected = MantelHaenszel.expected(a, b, baskets);
    assertEquals(34.0, expected, 1e-12);
    PairCounts counts = PairCounts.exact(350, 80, 90, 34).withStratifiedExpected(Estimate.exact(expected));
    PairMeasures m = PairMeasures.of(counts);
    assertEquals(350.0 * 34 / (80 * 90), m.liftUnadjusted(), 1e-12);
    assertEquals(1.0, m.lift(), 1e-12);
    assertEquals(34.0, m.expectedCountAB(), 1e-12);
    assertEquals(0.0, m.leverage(), 1e-12);
    assertEquals(34.0 / 350 - (80.0 / 350) * (90.0 / 350), m.leverageUnadjusted(), 1e-12);
    assertEquals(1.0, m.shrunkLift(), 1e-12); // (34 + 10)/(34 + 10)
    assertEquals(1.0, m.convictionAB(), 1e-12); // (1 − 34/80)/(1 − 34/80)
    assertEquals(0.0, m.gSquared(), 1e-12);
    assertTrue(m.liftLower() < 1 && m.liftUpper() > 1, m.toString());
    assertTrue(m.liftLowerUnadjusted() > 1, "the textbook interval excludes 1: the size effect looks like an association");
    assertFalse(m.isRepelling());
    // the ones that read no null model do not change
    assertEquals(34.0 / 80, m.confidenceAB(), 1e-12);
    assertEquals(34.0 / 350, m.support(), 1e-12);
  }

  @Test
  void adjustedFormulasHandComputed() {
    // N 1000, n_a 100, n_b 200, n_ab 40, stratified E 25: lift 1.6, leverage 15/1000, shrunk (50)/(35),
    // conviction a ⇒ b (1 − 25/100)/(1 − 0.4) = 1.25, b ⇒ a (1 − 25/200)/(1 − 0.2) = 1.09375,
    // G² = 2·(40·ln(40/25) − 15)
    PairMeasures m = PairMeasures.of(PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(Estimate.exact(25)));
    assertEquals(1.6, m.lift(), 1e-12);
    assertEquals(0.015, m.leverage(), 1e-12);
    assertEquals(50.0 / 35, m.shrunkLift(), 1e-12);
    assertEquals(1.25, m.convictionAB(), 1e-12);
    assertEquals(1.09375, m.convictionBA(), 1e-12);
    double g2 = 2 * (40 * Math.log(40.0 / 25) - 15);
    assertEquals(g2, m.gSquared(), 1e-12);
    assertEquals(Math.sqrt(g2), m.signedRootGSquared(), 1e-12);
    // the interval: the documented delta-method variance with the adjusted lift, exact counts
    double halfWidth = 1.959964 * Math.sqrt(1.0 / 40 - 1.0 / 100 - 1.0 / 200 + (2 * 1.6 - 1) / 1000);
    assertEquals(1.6 * Math.exp(-halfWidth), m.liftLower(), 1e-5);
    assertEquals(1.6 * Math.exp(halfWidth), m.liftUpper(), 1e-5);
    // the textbook values are those of the plain table (lift 2)
    assertEquals(2.0, m.liftUnadjusted(), 1e-12);
    assertEquals(PairMeasures.of(PairCounts.exact(1_000, 100, 200, 40)).liftLower(), m.liftLowerUnadjusted(), 0.0);
    // below E: a negative signed root
    PairMeasures below = PairMeasures.of(PairCounts.exact(1_000, 100, 200, 10).withStratifiedExpected(Estimate.exact(25)));
    assertTrue(below.signedRootGSquared() < 0);
  }

  /**
   * A weighted pair count of dispersion φ weighs as n_ab/φ baskets: G² and the shrunk lift are those of n_ab/φ against
   * E/φ, the p-value that of n_ab/φ against E/φ (the null model's own tolerance stays relative), the interval's
   * variance gains (φ − 1)/n_ab; lift, leverage and conviction do not move, nor do the textbook measures.
   */
  @Test
  void aDispersedPairCountWeighsAsFewerBaskets() {
    double dispersion = 4;
    PairMeasures plain = PairMeasures.of(PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(Estimate.exact(25)));
    PairMeasures dispersed = PairMeasures.of(PairCounts.exact(1_000, 100, 200, 40)
        .withStratifiedExpected(Estimate.exact(25), dispersion));
    assertEquals(plain.lift(), dispersed.lift(), 0.0);
    assertEquals(plain.leverage(), dispersed.leverage(), 0.0);
    assertEquals(plain.convictionAB(), dispersed.convictionAB(), 0.0);
    assertEquals(plain.gSquared() / dispersion, dispersed.gSquared(), 1e-12);
    assertEquals(2 * (10 * Math.log(40.0 / 25) - 3.75), dispersed.gSquared(), 1e-12, "G² of 10 against 6.25");
    assertEquals((10 + 10) / (6.25 + 10), dispersed.shrunkLift(), 1e-12);
    assertEquals(PairMeasures.gammaPoissonUpperTail(10, 6.25, PairMeasures.NULL_MODEL_TOLERANCE),
        dispersed.associationPValue(), 1e-15);
    assertTrue(dispersed.associationPValue() > 10 * plain.associationPValue(), "less evidence: a larger p-value");
    double halfWidth = 1.959964 * Math.sqrt(1.0 / 40 - 1.0 / 100 - 1.0 / 200 + (2 * 1.6 - 1) / 1000 + 3.0 / 40);
    assertEquals(1.6 * Math.exp(-halfWidth), dispersed.liftLower(), 1e-5);
    assertEquals(1.6 * Math.exp(halfWidth), dispersed.liftUpper(), 1e-5);
    assertEquals(plain.liftLowerUnadjusted(), dispersed.liftLowerUnadjusted(), 0.0);
    assertEquals(plain.gSquaredUnadjusted(), dispersed.gSquaredUnadjusted(), 0.0);
    assertThrows(IllegalArgumentException.class,
        () -> PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(Estimate.exact(25), 0.5));
  }

  @Test
  void sketchBoundsOfTheExpectedCountWidenTheInterval() {
    PairCounts exact = PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(Estimate.exact(25));
    PairCounts bounded = PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(new Estimate(25, 20, 30));
    PairMeasures e = PairMeasures.of(exact);
    PairMeasures b = PairMeasures.of(bounded);
    assertEquals(e.lift(), b.lift(), 0.0);
    double samplingFactor = e.liftUpper() / 1.6;
    assertEquals(40.0 / 30 / samplingFactor, b.liftLower(), 1e-9);
    assertEquals(40.0 / 20 * samplingFactor, b.liftUpper(), 1e-9);
    // E's lower bound 0 (the classes of an untracked item unknown): no upper end
    PairCounts open = PairCounts.exact(1_000, 100, 200, 40).withStratifiedExpected(new Estimate(25, 0, 30));
    assertEquals(Double.POSITIVE_INFINITY, PairMeasures.of(open).liftUpper());
    // the offer test reads the least favourable bounds: E.upper
    assertEquals(PairMeasures.gammaPoissonUpperTail(40, 30, PairMeasures.NULL_MODEL_TOLERANCE), b.associationPValue(),
        0.0);
  }

  /**
   * The offer screen's p-value alone ({@link PairMeasures#associationPValue(PairCounts)}) is, bit for bit, the one
   * the full measures give, on seeded counts with and without size classes, with wide and tight sketch bounds,
   * counts above N and pairs above their items (which the measures clamp), and dispersion above 1.
   */
  @Test
  void thePValueAloneEqualsTheFullMeasures() {
    java.util.SplittableRandom random = new java.util.SplittableRandom(17);
    for (int i = 0; i < 20_000; i++) {
      double baskets = random.nextInt(5) == 0 ? 0 : 1 + random.nextDouble(100_000);
      Estimate a = estimate(random, random.nextDouble(baskets * 1.1 + 1));
      Estimate b = estimate(random, random.nextDouble(baskets * 1.1 + 1));
      Estimate ab = estimate(random, random.nextDouble(Math.min(a.upper(), b.upper()) * 1.2 + 1));
      PairCounts counts = new PairCounts(baskets, a, b, ab);
      if (random.nextBoolean()) {
        double e = random.nextDouble(a.value() * b.value() / Math.max(1, baskets) * 2 + 1);
        counts = counts.withStratifiedExpected(estimate(random, e), 1 + random.nextDouble(3));
      }
      double full = PairMeasures.of(counts).associationPValue();
      assertEquals(Double.doubleToRawLongBits(full), Double.doubleToRawLongBits(PairMeasures.associationPValue(counts)),
          counts.toString());
    }
  }

  private static Estimate estimate(java.util.SplittableRandom random, double value) {
    double lower = random.nextBoolean() ? value : value * random.nextDouble();
    double upper = random.nextBoolean() ? value : value * (1 + random.nextDouble());
    return new Estimate(value, lower, upper);
  }

  @Test
  void poissonUpperTailMatchesCommonsMath() {
    for (double mean : new double[] {0.5, 3, 25, 400}) {
      PoissonDistribution poisson = new PoissonDistribution(mean);
      for (int x = 1; x < 3 * mean + 10; x += 1 + (int) (mean / 10)) {
        assertEquals(1 - poisson.cumulativeProbability(x - 1), PairMeasures.poissonUpperTail(x, mean),
            1e-9 + 1e-7 * (1 - poisson.cumulativeProbability(x - 1)), "mean " + mean + ", x " + x);
      }
    }
    assertEquals(1.0, PairMeasures.poissonUpperTail(0, 5));
    // the gamma–Poisson tail against a direct sum of the negative binomial: r = 100 (τ 0.1), mean 50, x 70
    double r = 100;
    double p = r / (r + 50);
    double term = Math.pow(p, r); // P(X = 0)
    double below = 0;
    for (int k = 0; k < 70; k++) {
      below += term;
      term *= (k + r) / (k + 1) * (1 - p);
    }
    assertEquals(1 - below, PairMeasures.gammaPoissonUpperTail(70, 50, 0.1), 1e-9);
    assertEquals(PairMeasures.poissonUpperTail(70, 50), PairMeasures.gammaPoissonUpperTail(70, 50, 0), 0.0);
    // a 5% excess over E = 15,000 is no evidence under a 10% tolerance; a doubling is
    assertTrue(PairMeasures.gammaPoissonUpperTail(15_750, 15_000, 0.1) > 0.3);
    assertTrue(PairMeasures.gammaPoissonUpperTail(30_000, 15_000, 0.1) < 1e-6);
    assertEquals(0.0, PairMeasures.poissonUpperTail(2, 0));
  }

  @Test
  void sizeClassesParseLabelAndClassify() {
    SizeClasses defaults = SizeClasses.defaults();
    assertEquals("1,2,3,4-5,6-9,10-15,16-24,25-39,40+", defaults.toString());
    assertEquals(defaults, SizeClasses.parse("1,2,3,4-5,6-9,10-15,16-24,25-39,40+"));
    assertEquals(defaults, SizeClasses.parse("1, 2, 3, 4, 6, 10, 16, 25, 40"));
    int[] expectedClass = {-1, 0, 1, 2, 3, 3, 4, 4, 4, 4, 5};
    for (int size = 1; size < expectedClass.length; size++) {
      assertEquals(expectedClass[size], defaults.classOf(size), "size " + size);
    }
    assertEquals(7, defaults.classOf(39));
    assertEquals(8, defaults.classOf(40));
    assertEquals(8, defaults.classOf(1_000));
    SizeClasses coarse = SizeClasses.parse("1,2,3,4-5,6+");
    assertEquals(SizeClasses.of(1, 2, 3, 4, 6), coarse);
    assertEquals(4, coarse.classOf(1_000));
    assertTrue(defaults.pairless(0));
    assertFalse(defaults.pairless(1));
    assertFalse(SizeClasses.single().pairless(0));
    assertEquals("1+", SizeClasses.single().toString());
    assertThrows(IllegalArgumentException.class, () -> SizeClasses.of(2, 3));
    assertThrows(IllegalArgumentException.class, () -> SizeClasses.of(1, 3, 3));
    assertThrows(IllegalArgumentException.class, () -> SizeClasses.parse("1,2-4,6+"));
    assertThrows(IllegalArgumentException.class, () -> SizeClasses.parse("one"));
  }
}
