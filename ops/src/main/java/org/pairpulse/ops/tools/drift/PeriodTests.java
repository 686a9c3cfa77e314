package org.pairpulse.ops.tools.drift;

/**
 * The two tests of the reference detector ({@link ExactDriftDetector}), comparing a recent period with a reference
 * period on exact counts. Written slow and obvious: they are the yardstick, not the product.
 *
 * <h2>(a) The pair's rate per basket: {@link #rateG2}</h2>
 * The pair occurs x times in N₁ recent baskets and y times in N₂ reference baskets. Under "same rate", x and y are
 * Poisson with means proportional to the exposures, and conditionally on x + y, x ~ Binomial(x + y, N₁/(N₁ + N₂))
 * (the conditional test of two Poisson rates; Przyborowski &amp; Wilenski 1940, from memory). Its likelihood-ratio
 * statistic is G² = 2 [x ln(x/e₁) + y ln(y/e₂)] with e_i = (x + y)·N_i/(N₁ + N₂), χ² with 1 df for large counts
 * (Wilks). It is a goodness-of-fit G² of (x, y) against expected counts proportional to (N₁, N₂), which is what Commons
 * Math's {@code GTest.g} computes (the tests check one against the other).
 *
 * <h2>(b) The association, margin-free: {@link #homogeneityG2}</h2>
 * The pair's 2×2 table (a in basket or not × b in basket or not) in each period forms a 2×2×2 table n[i][j][k] (k =
 * period). "The association did not change" is "the odds ratio is the same in both periods", the log-linear model of
 * no three-way interaction (homogeneous association, [AB][AK][BK]; Agresti, Categorical Data Analysis, 2nd ed. 2002,
 * sections 8.2 and 8.7, from memory). It has no closed-form fit: iterative proportional fitting (Deming &amp; Stephan
 * 1940) scales a table of ones to match the three observed two-way margins in turn until they all match to
 * {@value #IPF_TOLERANCE} (relative); G² = 2 Σ n ln(n/m) over the 8 cells, χ² with 1 df. The odds ratio moves only when
 * the association moves, not when one item's popularity does (an item's popularity is a margin, fitted exactly).
 */
public final class PeriodTests {
  /** Relative tolerance on the fitted two-way margins. */
  public static final double IPF_TOLERANCE = 1e-9;
  /** An iteration cap that a 2×2×2 table with positive two-way margins never comes near. */
  static final int IPF_MAX_ITERATIONS = 100_000;

  private PeriodTests() {}

  /**
   * G² of "same rate": {@code x} occurrences in {@code exposure1} baskets against {@code y} in {@code exposure2}.
   * 0 when {@code x + y == 0}.
   */
  public static double rateG2(long x, double exposure1, long y, double exposure2) {
    if (x < 0 || y < 0 || !(exposure1 > 0) || !(exposure2 > 0)) {
      throw new IllegalArgumentException("need counts >= 0 and exposures > 0");
    }
    long total = x + y;
    if (total == 0) {
      return 0;
    }
    double share1 = exposure1 / (exposure1 + exposure2);
    double e1 = total * share1;
    double e2 = total - e1;
    return 2 * (term(x, e1) + term(y, e2));
  }

  /** +1 when the recent rate x/N₁ is above the reference rate y/N₂, -1 below, 0 equal. */
  public static int rateDirection(long x, double exposure1, long y, double exposure2) {
    return Double.compare(x / exposure1, y / exposure2);
  }

  private static double term(double observed, double expected) {
    return observed == 0 ? 0 : observed * Math.log(observed / expected);
  }

  /**
   * The 2×2 table of a pair in one period: {@code {n(a∧b), n(a∧¬b), n(¬a∧b), n(¬a∧¬b)}} from the pair count, the item
   * counts and the baskets.
   */
  public static double[] table(double pair, double itemA, double itemB, double baskets) {
    double[] cells = {pair, itemA - pair, itemB - pair, baskets - itemA - itemB + pair};
    for (double cell : cells) {
      if (cell < 0) {
        throw new IllegalArgumentException("inconsistent counts: pair " + pair + ", items " + itemA + ", " + itemB
            + ", baskets " + baskets);
      }
    }
    return cells;
  }

  /**
   * G² of the homogeneous-association model for two 2×2 tables (each {@code {n11, n12, n21, n22}}), by iterative
   * proportional fitting; 1 degree of freedom.
   */
  public static double homogeneityG2(double[] period1, double[] period2) {
    double[][][] n = new double[2][2][2];
    for (int i = 0; i < 2; i++) {
      for (int j = 0; j < 2; j++) {
        n[i][j][0] = period1[2 * i + j];
        n[i][j][1] = period2[2 * i + j];
      }
    }
    double[][][] m = fitHomogeneous(n);
    double g2 = 0;
    for (int i = 0; i < 2; i++) {
      for (int j = 0; j < 2; j++) {
        for (int k = 0; k < 2; k++) {
          g2 += term(n[i][j][k], m[i][j][k]);
        }
      }
    }
    return Math.max(0, 2 * g2);
  }

  /**
   * The fitted table of the model [AB][AK][BK] for {@code n[i][j][k]}: IPF from a table of ones, each cycle matching
   * the AB, AK and BK margins in turn, until all three match to {@value #IPF_TOLERANCE}.
   */
  static double[][][] fitHomogeneous(double[][][] n) {
    double[][][] m = new double[2][2][2];
    for (double[][] plane : m) {
      for (double[] row : plane) {
        java.util.Arrays.fill(row, 1.0);
      }
    }
    for (int iteration = 0; iteration < IPF_MAX_ITERATIONS; iteration++) {
      for (int i = 0; i < 2; i++) { // AB margin: sum over k
        for (int j = 0; j < 2; j++) {
          double factor = ratio(n[i][j][0] + n[i][j][1], m[i][j][0] + m[i][j][1]);
          m[i][j][0] *= factor;
          m[i][j][1] *= factor;
        }
      }
      for (int i = 0; i < 2; i++) { // AK margin: sum over j
        for (int k = 0; k < 2; k++) {
          double factor = ratio(n[i][0][k] + n[i][1][k], m[i][0][k] + m[i][1][k]);
          m[i][0][k] *= factor;
          m[i][1][k] *= factor;
        }
      }
      for (int j = 0; j < 2; j++) { // BK margin: sum over i
        for (int k = 0; k < 2; k++) {
          double factor = ratio(n[0][j][k] + n[1][j][k], m[0][j][k] + m[1][j][k]);
          m[0][j][k] *= factor;
          m[1][j][k] *= factor;
        }
      }
      if (marginsMatch(n, m)) {
        return m;
      }
    }
    throw new ArithmeticException("IPF did not converge in " + IPF_MAX_ITERATIONS + " cycles");
  }

  private static double ratio(double observed, double fitted) {
    return fitted == 0 ? 0 : observed / fitted;
  }

  private static boolean marginsMatch(double[][][] n, double[][][] m) {
    for (int a = 0; a < 2; a++) {
      for (int b = 0; b < 2; b++) {
        if (!close(n[a][b][0] + n[a][b][1], m[a][b][0] + m[a][b][1])
            || !close(n[a][0][b] + n[a][1][b], m[a][0][b] + m[a][1][b])
            || !close(n[0][a][b] + n[1][a][b], m[0][a][b] + m[1][a][b])) {
          return false;
        }
      }
    }
    return true;
  }

  private static boolean close(double observed, double fitted) {
    return Math.abs(observed - fitted) <= IPF_TOLERANCE * Math.max(1.0, observed);
  }

  /**
   * The sign of ln OR(period 1) − ln OR(period 2), each odds ratio with 0.5 added to every cell (Haldane's
   * correction, so that a zero cell has a direction): +1 when the association is stronger in period 1.
   */
  public static int oddsRatioDirection(double[] period1, double[] period2) {
    return Double.compare(logOddsRatio(period1), logOddsRatio(period2));
  }

  /** ln OR of a 2×2 table with 0.5 added to each cell. */
  public static double logOddsRatio(double[] cells) {
    return Math.log(cells[0] + 0.5) + Math.log(cells[3] + 0.5) - Math.log(cells[1] + 0.5) - Math.log(cells[2] + 0.5);
  }
}
