package org.pairpulse.sketch.engine;

/**
 * What a refresh keeps for the next one, so that its cost follows what changed rather than the table's size: the
 * closed panes' sums of tracked items and pairs per window ({@link ClosedPaneSums}, and {@link ClosedExactSums} for keys
 * whose window count is exact) and each horizon's last known
 * order of pair slots (a table sorts on read; the next sort starts from the newest order a reader computed). Memory
 * only: it never changes a table, which equals one built without it
 * ({@link PairTables#build(PairEngine, PairTables.Options, RefreshMemory)} with null). Writer thread only (the last
 * orders: any thread); not in a snapshot.
 */
final class RefreshMemory {
  final ClosedPaneSums items;
  final ClosedPaneSums pairs;
  /** Settled tracked items' and pairs' exact counts in closed window panes ({@link ClosedExactSums}). */
  final ClosedExactSums settledItems;
  final ClosedExactSums settledPairs;
  /**
   * Per horizon index, the pair slots best first of the newest table a reader sorted (null before any), set by the
   * reader's thread when it sorts; the next sort of that horizon, in any table, starts from it. An {@code int[]}: no
   * table holds an older one.
   */
  final LastOrder[] lastOrder;

  /** One horizon's newest sorted order (written by whichever thread sorts, read by the next sort). */
  static final class LastOrder {
    volatile int[] slots;
  }

  RefreshMemory(int windowCount, int itemCapacity, int pairCapacity, int horizonCount) {
    this.items = new ClosedPaneSums(windowCount, itemCapacity);
    this.pairs = new ClosedPaneSums(windowCount, pairCapacity);
    this.settledItems = new ClosedExactSums(windowCount, itemCapacity);
    this.settledPairs = new ClosedExactSums(windowCount, pairCapacity);
    this.lastOrder = newOrders(horizonCount);
  }

  private static LastOrder[] newOrders(int horizonCount) {
    LastOrder[] orders = new LastOrder[horizonCount];
    for (int h = 0; h < horizonCount; h++) {
      orders[h] = new LastOrder();
    }
    return orders;
  }
}
