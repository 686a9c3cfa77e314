package org.pairpulse.serve.drift;

/**
 * The slow, obvious oracle of {@link DriftStatistics#interactionRootG2}: iterative proportional fitting of
 * the homogeneous-association model [AB][AP][BP] on a 2×2×2 table (Deming and Stephan 1940; Agresti,
 * Categorical Data Analysis, section 8.7), run until the fitted margins match, then G² = 2 Σ obs ln(obs/fit).
 */
final class SlowInteractionFit {
  private SlowInteractionFit() {}

  /** G² of the model for cells (a1, b1, c1, d1, a2, b2, c2, d2): period p, item A present?, item B present?. */
  static double gSquared(double[] cells) {
    double[][][] n = new double[2][2][2];
    for (int p = 0; p < 2; p++) {
      n[p][0][0] = cells[4 * p]; // a: both
      n[p][0][1] = cells[4 * p + 1]; // b: A without B
      n[p][1][0] = cells[4 * p + 2]; // c: B without A
      n[p][1][1] = cells[4 * p + 3]; // d: neither
    }
    double[][][] m = new double[2][2][2];
    for (double[][] plane : m) {
      for (double[] row : plane) {
        java.util.Arrays.fill(row, 1.0);
      }
    }
    for (int iteration = 0; iteration < 100_000; iteration++) {
      double change = 0;
      for (int margin = 0; margin < 3; margin++) {
        for (int i = 0; i < 2; i++) {
          for (int j = 0; j < 2; j++) {
            double observed = 0;
            double fitted = 0;
            for (int k = 0; k < 2; k++) {
              observed += cell(n, margin, i, j, k);
              fitted += cell(m, margin, i, j, k);
            }
            for (int k = 0; k < 2; k++) {
              double factor = fitted == 0 ? 0 : observed / fitted;
              change = Math.max(change, Math.abs(factor - 1));
              scale(m, margin, i, j, k, factor);
            }
          }
        }
      }
      if (change < 1e-13) {
        break;
      }
    }
    double g = 0;
    for (int p = 0; p < 2; p++) {
      for (int i = 0; i < 2; i++) {
        for (int j = 0; j < 2; j++) {
          if (n[p][i][j] > 0) {
            g += 2 * n[p][i][j] * Math.log(n[p][i][j] / m[p][i][j]);
          }
        }
      }
    }
    return g;
  }

  /** The cell of the two-way margin {@code margin} (0: P×A, 1: P×B, 2: A×B) at (i, j), summed index k. */
  private static double cell(double[][][] t, int margin, int i, int j, int k) {
    return margin == 0 ? t[i][j][k] : margin == 1 ? t[i][k][j] : t[k][i][j];
  }

  private static void scale(double[][][] t, int margin, int i, int j, int k, double factor) {
    if (margin == 0) {
      t[i][j][k] *= factor;
    } else if (margin == 1) {
      t[i][k][j] *= factor;
    } else {
      t[k][i][j] *= factor;
    }
  }
}
