package org.pairpulse.sketch.engine;

import org.pairpulse.sketch.hash.ItemHash;

/**
 * The per-basket cap on pairs: an unbiased systematic sample with integer inverse-probability weights.
 *
 * <p>A basket of b distinct items has M = b(b−1)/2 pairs. When M exceeds the cap P, the pairs are
 * enumerated in a fixed order (items sorted by hash, then row-major) and every k-th one is kept, from a
 * start r chosen uniformly in [0, k), with k = ⌈M/P⌉. Each pair is kept with probability exactly 1/k and
 * then weighs k, so every pair count stays unbiased (Horvitz and Thompson 1952, "A generalization of
 * sampling without replacement from a finite universe", JASA); at most ⌈M/k⌉ ≤ P pairs are kept. Item
 * counts and N are never sampled.
 *
 * <p>The start r comes from a hash of the basket's items, so a replay of the same basket makes the same
 * choice (deterministic restarts and backtests); over different baskets the starts spread uniformly.
 */
final class PairSampling {
  private final int maxPairsPerBasket;
  private long cappedBaskets;
  private long skippedPairs;

  PairSampling(int maxPairsPerBasket) {
    this.maxPairsPerBasket = maxPairsPerBasket;
  }

  /** k: 1 if the basket's pairs fit under the cap, else ⌈M/P⌉. */
  long stepFor(long pairTotal) {
    return pairTotal <= maxPairsPerBasket ? 1 : (pairTotal + maxPairsPerBasket - 1) / maxPairsPerBasket;
  }

  /** r in [0, k), from the basket's item hashes. */
  long startFor(long[] sortedHashes, int count, long step) {
    long seed = 0x243F_6A88_85A3_08D3L;
    for (int i = 0; i < count; i++) {
      seed = ItemHash.mix64(seed ^ sortedHashes[i]);
    }
    return Math.floorMod(seed, step);
  }

  void recordCapped(long pairTotal, long kept) {
    cappedBaskets++;
    skippedPairs += pairTotal - kept;
  }

  long cappedBaskets() {
    return cappedBaskets;
  }

  long skippedPairs() {
    return skippedPairs;
  }

  void restore(long capped, long skipped) {
    this.cappedBaskets = capped;
    this.skippedPairs = skipped;
  }
}
