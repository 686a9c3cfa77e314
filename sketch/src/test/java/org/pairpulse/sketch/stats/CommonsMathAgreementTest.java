package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.apache.commons.math3.exception.ZeroException;
import org.apache.commons.math3.stat.inference.ChiSquareTest;
import org.apache.commons.math3.stat.inference.GTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * G², signed √G², χ² and the p-value against Apache Commons Math 3.6.1 (GTest, ChiSquareTest,
 * ChiSquaredDistribution), an independent implementation.
 */
class CommonsMathAgreementTest {

  private static final GTest G_TEST = new GTest();
  private static final ChiSquareTest CHI_SQUARE_TEST = new ChiSquareTest();
  private static final ChiSquaredDistribution CHI_SQUARED_ONE_DF = new ChiSquaredDistribution(1);

  /** The pair whose 2×2 table is (k11 k12 / k21 k22). */
  private static PairMeasures measuresOfTable(long k11, long k12, long k21, long k22) {
    return PairMeasures.of(PairCounts.exact(k11 + k12 + k21 + k22, k11 + k12, k11 + k21, k11));
  }

  // Vectors and expected G² values of Apache Commons Math's GTestTest.testRootLogLikelihood
  // (src/test/java/org/apache/commons/math3/stat/inference/GTestTest.java, read via code search
  // at commit 0987ae5a; they follow Dunning's examples), with that test's tolerances.
  @ParameterizedTest
  @CsvSource({
    "1, 0, 0, 1, 2.772589, 1e-6",
    "0, 1, 1, 0, -2.772589, 1e-6",
    "10, 0, 0, 10, 27.72589, 1e-5",
    "5, 1995, 0, 100000, 39.33052, 1e-5",
    "0, 100000, 5, 1995, -39.33052, 1e-5",
    "1000, 1995, 1000, 100000, 4730.737, 1e-3",
    "1000, 100000, 1000, 1995, -4730.737, 1e-3",
    "1000, 1000, 1000, 100000, 5734.343, 1e-3",
    "1000, 1000, 1000, 99000, 5714.932, 1e-3",
  })
  void signedRootMatchesCommonsMathTestVectors(long k11, long k12, long k21, long k22,
                         double signedGSquared, double tolerance) {
    double expectedRoot = Math.signum(signedGSquared) * Math.sqrt(Math.abs(signedGSquared));
    PairMeasures m = measuresOfTable(k11, k12, k21, k22);
    assertEquals(expectedRoot, m.signedRootGSquared(), tolerance);
    assertEquals(expectedRoot, G_TEST.rootLogLikelihoodRatio(k11, k12, k21, k22), tolerance);
  }

  @Test
  void signOfRootFollowsCommonsMathTestVectors() {
    // GTestTest.testRootLogLikelihood: positive where k11 is bigger than expected, negative below
    assertTrue(measuresOfTable(904, 21060, 1144, 283012).signedRootGSquared() > 0);
    assertTrue(measuresOfTable(36, 21928, 60280, 623876).signedRootGSquared() < 0);
  }

  @Test
  void thousandRandomTablesAgreeWithCommonsMath() {
    SplittableRandom random = new SplittableRandom(20240611L);
    long[] cellCaps = {1, 2, 3, 5, 10, 100, 10_000, 1_000_000};
    int comparedWithCommons = 0;
    int zeroMargins = 0;
    int exactlyIndependent = 0;
    for (int i = 0; i < 1000; i++) {
      long[] k = new long[4];
      for (int cell = 0; cell < 4; cell++) {
        long cap = cellCaps[random.nextInt(cellCaps.length)];
        k[cell] = random.nextInt(8) == 0 ? 0 : random.nextLong(cap + 1); // zero cells often
      }
      String table = "table " + k[0] + " " + k[1] + " " + k[2] + " " + k[3];
      PairMeasures m = measuresOfTable(k[0], k[1], k[2], k[3]);
      boolean zeroMargin = k[0] + k[1] == 0 || k[2] + k[3] == 0 || k[0] + k[2] == 0 || k[1] + k[3] == 0;
      if (zeroMargin) {
        // commons-math rejects such tables (ZeroException); no evidence against independence
        zeroMargins++;
        assertEquals(0.0, m.gSquared(), table);
        assertEquals(0.0, m.chiSquare(), table);
        assertEquals(1.0, m.gSquaredPValue(), table);
        continue;
      }
      comparedWithCommons++;
      long[] row1 = {k[0], k[1]};
      long[] row2 = {k[2], k[3]};
      double expectedG = G_TEST.gDataSetsComparison(row1, row2);
      Close.assertClose(expectedG, m.gSquared(), 1e-9, table + " G²");
      if (k[0] * k[3] == k[1] * k[2]) {
        // exact independence: commons' G² can round to a tiny negative number and its root to
        // NaN; ours is exactly 0
        exactlyIndependent++;
        assertEquals(0.0, m.signedRootGSquared(), table);
      } else {
        assertEquals(G_TEST.rootLogLikelihoodRatio(k[0], k[1], k[2], k[3]), m.signedRootGSquared(),
            1e-6 * Math.max(1, Math.abs(m.signedRootGSquared())), table + " signed root");
      }
      Close.assertClose(CHI_SQUARE_TEST.chiSquare(new long[][] {row1, row2}), m.chiSquare(), 1e-9,
          table + " chi-square");
      // p-value: commons' G-test p-value (df = 1) and 1 − CDF of χ² with 1 degree of freedom
      // near G² = 0 the p-value's slope is ~1/√G², so the two G² implementations' rounding shows
      // up amplified: compare with commons' p loosely and with the CDF at our own G² tightly
      assertEquals(G_TEST.gTestDataSetsComparison(row1, row2), m.gSquaredPValue(), 1e-6, table + " p");
      assertEquals(1.0 - CHI_SQUARED_ONE_DF.cumulativeProbability(m.gSquared()), m.gSquaredPValue(),
          1e-9, table + " p vs CDF");
    }
    // the generator must exercise both branches
    assertTrue(comparedWithCommons > 600, "compared " + comparedWithCommons);
    assertTrue(zeroMargins > 20, "zero margins " + zeroMargins);
    assertTrue(exactlyIndependent > 0, "exactly independent " + exactlyIndependent);
  }

  @Test
  void commonsMathRejectsTheZeroMarginTablesWeScoreAsZero() {
    // guards the assumption the random test relies on
    org.junit.jupiter.api.Assertions.assertThrows(ZeroException.class,
        () -> G_TEST.gDataSetsComparison(new long[] {0, 5}, new long[] {0, 7}));
    assertEquals(0.0, measuresOfTable(0, 5, 0, 7).gSquared());
  }
}
