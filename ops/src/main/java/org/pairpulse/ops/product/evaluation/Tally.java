package org.pairpulse.ops.product.evaluation;

/**
 * Hit rates and mean reciprocal rank of one method over a set of trials.
 *
 * @param trials trials counted
 * @param cutoffs the k's of {@code hits}
 * @param hits per cut-off k, trials whose hidden item ranked within the top k
 * @param reciprocalRankSum Σ 1/rank over trials (a miss adds 0)
 */
public record Tally(long trials, int[] cutoffs, long[] hits, double reciprocalRankSum) {
  public Tally {
    cutoffs = cutoffs.clone();
    hits = hits.clone();
  }

  /** Share of trials with the hidden item in the top {@code k}; NaN without trials. */
  public double hitRate(int k) {
    for (int i = 0; i < cutoffs.length; i++) {
      if (cutoffs[i] == k) {
        return trials == 0 ? Double.NaN : (double) hits[i] / trials;
      }
    }
    throw new IllegalArgumentException("no hit rate at k=" + k + "; cut-offs are " + java.util.Arrays.toString(cutoffs));
  }

  /** Mean of 1/rank (0 for a miss; ranks beyond the largest k are misses); NaN without trials. */
  public double meanReciprocalRank() {
    return trials == 0 ? Double.NaN : reciprocalRankSum / trials;
  }

  /** Builds a tally from ranks (0 = miss). */
  static Tally of(int[] cutoffs, byte[] ranks, int from, int to) {
    long[] hits = new long[cutoffs.length];
    double rr = 0;
    for (int i = from; i < to; i++) {
      int rank = ranks[i];
      if (rank > 0) {
        rr += 1.0 / rank;
        for (int c = 0; c < cutoffs.length; c++) {
          if (rank <= cutoffs[c]) {
            hits[c]++;
          }
        }
      }
    }
    return new Tally(to - from, cutoffs, hits, rr);
  }
}
