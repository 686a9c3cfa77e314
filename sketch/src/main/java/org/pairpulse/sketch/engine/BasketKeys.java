package org.pairpulse.sketch.engine;

import java.util.Arrays;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.hash.ItemHash;

/**
 * One basket's keys on their way into a {@link PairEngine}, in arrays reused from basket to basket (no
 * allocation for baskets of up to 64 items): its distinct items sorted by hash, the pairs counted (all,
 * or a systematic sample under the pair cap, see {@link PairSampling}), every key's count-min row hashes
 * (computed once for all horizons: all item sketches share one seed and depth, as do all pair sketches),
 * and, filled by the engine while adding, each key's estimate in every decay right after its update.
 */
final class BasketKeys {
  final int itemDepth;
  final int pairDepth;
  private final int decays;

  /** Distinct items sorted by hash: hashes, labels, and the tracked slot each has once counted (or −1). */
  long[] itemHashes = new long[64];
  String[] itemLabels = new String[64];
  int[] itemSlots = new int[64];
  /** Row hashes: {@code itemDepth} per item, {@code pairDepth} per pair. */
  long[] itemRows;
  long[] pairRows = new long[0];
  /** Counted pairs: their keys and the indices of their two items. */
  long[] pairKeys = new long[0];
  int[] pairFirst = new int[0];
  int[] pairSecond = new int[0];
  /** Weight of each counted pair: 1, or the cap's step k. */
  double pairWeight;
  /** Per decay (kind ordinal) and item or pair: the estimate right after the basket's update. */
  final double[][] itemDecayEstimates;
  final double[][] pairDecayEstimates;

  BasketKeys(int itemDepth, int pairDepth, int decays) {
    this.itemDepth = itemDepth;
    this.pairDepth = pairDepth;
    this.decays = decays;
    this.itemRows = new long[64 * itemDepth];
    this.itemDecayEstimates = new double[decays][64];
    this.pairDecayEstimates = new double[decays][0];
    ensurePairs(64);
  }

  /** Sorts the basket's distinct items by hash into the item arrays; returns how many. Null or empty ids are ignored. */
  int loadItems(String[] basketItems) {
    int n = basketItems.length;
    if (itemHashes.length < n) {
      int size = Integer.highestOneBit(n) << 1;
      itemHashes = new long[size];
      itemLabels = new String[size];
      itemSlots = new int[size];
      itemRows = new long[size * itemDepth];
      for (int d = 0; d < decays; d++) {
        itemDecayEstimates[d] = new double[size];
      }
    }
    int count = 0;
    for (String item : basketItems) {
      if (item == null || item.isEmpty()) {
        continue;
      }
      itemHashes[count] = ItemHash.of(item);
      itemLabels[count] = item;
      count++;
    }
    if (count <= 32) {
      for (int i = 1; i < count; i++) { // insertion sort: baskets are small
        long hash = itemHashes[i];
        String item = itemLabels[i];
        int j = i - 1;
        while (j >= 0 && itemHashes[j] > hash) {
          itemHashes[j + 1] = itemHashes[j];
          itemLabels[j + 1] = itemLabels[j];
          j--;
        }
        itemHashes[j + 1] = hash;
        itemLabels[j + 1] = item;
      }
    } else {
      Integer[] order = new Integer[count];
      for (int i = 0; i < count; i++) {
        order[i] = i;
      }
      long[] hashes = Arrays.copyOf(itemHashes, count);
      String[] names = Arrays.copyOf(itemLabels, count);
      Arrays.sort(order, (x, y) -> Long.compare(hashes[x], hashes[y]));
      for (int i = 0; i < count; i++) {
        itemHashes[i] = hashes[order[i]];
        itemLabels[i] = names[order[i]];
      }
    }
    int distinct = 0;
    for (int i = 0; i < count; i++) {
      if (distinct == 0 || itemHashes[i] != itemHashes[distinct - 1]) {
        itemHashes[distinct] = itemHashes[i];
        itemLabels[distinct] = itemLabels[i];
        distinct++;
      }
    }
    return distinct;
  }

  /**
   * Chooses the pairs of the first {@code distinct} items (all of them, or every step-th under the cap)
   * into the pair arrays and sets {@link #pairWeight}; returns how many.
   */
  int selectPairs(int distinct, PairSampling sampling) {
    long pairTotal = (long) distinct * (distinct - 1) / 2;
    pairWeight = 1.0;
    if (pairTotal == 0) {
      return 0;
    }
    long step = sampling.stepFor(pairTotal);
    pairWeight = step;
    long start = step == 1 ? 0 : sampling.startFor(itemHashes, distinct, step);
    int selected = (int) ((pairTotal - start + step - 1) / step);
    ensurePairs(selected);
    // enumerate pairs (i < j) in row-major order and keep those with ordinal ≡ start (mod step)
    int count = 0;
    long ordinal = 0;
    long next = start;
    for (int i = 0; i < distinct - 1; i++) {
      long rowEnd = ordinal + (distinct - 1 - i);
      while (next < rowEnd) {
        int j = i + 1 + (int) (next - ordinal);
        pairKeys[count] = ItemHash.pairKey(itemHashes[i], itemHashes[j]);
        pairFirst[count] = i;
        pairSecond[count] = j;
        count++;
        next += step;
      }
      ordinal = rowEnd;
    }
    if (step > 1) {
      sampling.recordCapped(pairTotal, count);
    }
    return count;
  }

  /** Row hashes of the first {@code distinct} items and {@code pairCount} pairs, from sketches of the item and pair shape. */
  void hashRows(int distinct, int pairCount, CountMinSketch itemShape, CountMinSketch pairShape) {
    for (int i = 0; i < distinct; i++) {
      itemShape.rowHashes(itemHashes[i], itemRows, i * itemDepth);
    }
    for (int k = 0; k < pairCount; k++) {
      pairShape.rowHashes(pairKeys[k], pairRows, k * pairDepth);
    }
  }

  private void ensurePairs(int pairCount) {
    if (pairKeys.length < pairCount) {
      int size = Integer.highestOneBit(pairCount) << 1;
      pairKeys = new long[size];
      pairFirst = new int[size];
      pairSecond = new int[size];
      pairRows = new long[size * pairDepth];
      for (int d = 0; d < decays; d++) {
        pairDecayEstimates[d] = new double[size];
      }
    }
  }
}
