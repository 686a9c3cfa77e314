package org.pairpulse.ops.bench;

import java.util.SplittableRandom;

/**
 * Draws item ranks {@code 0..n-1} with probability proportional to {@code 1 / (rank + 1)^exponent} (Zipf's
 * law; rank 0 is the most popular item), by binary search in the cumulative distribution.
 */
public final class ZipfSampler {
  private final double[] cumulative;

  public ZipfSampler(int items, double exponent) {
    if (items < 2) {
      throw new IllegalArgumentException("a Zipf catalog needs at least 2 items, got " + items);
    }
    if (!(exponent >= 0) || Double.isInfinite(exponent)) {
      throw new IllegalArgumentException("Zipf exponent must be finite and >= 0, got " + exponent);
    }
    cumulative = new double[items];
    double sum = 0;
    for (int rank = 0; rank < items; rank++) {
      sum += Math.pow(rank + 1, -exponent);
      cumulative[rank] = sum;
    }
    for (int rank = 0; rank < items; rank++) {
      cumulative[rank] /= sum;
    }
    cumulative[items - 1] = 1.0; // no rounding gap at the top
  }

  int items() {
    return cumulative.length;
  }

  /** Probability of {@code rank}. */
  double probability(int rank) {
    return rank == 0 ? cumulative[0] : cumulative[rank] - cumulative[rank - 1];
  }

  public int sample(SplittableRandom random) {
    return Math.min(firstAbove(cumulative, random.nextDouble()), cumulative.length - 1);
  }

  /**
   * The first index whose cumulative value exceeds {@code u} (rank r owns [c(r−1), c(r))), or the length
   * when none does. Zero-probability entries (equal neighbours) are never chosen.
   */
  public static int firstAbove(double[] cumulative, double u) {
    int low = 0;
    int high = cumulative.length;
    while (low < high) {
      int middle = (low + high) >>> 1;
      if (cumulative[middle] > u) {
        high = middle;
      } else {
        low = middle + 1;
      }
    }
    return low;
  }
}
