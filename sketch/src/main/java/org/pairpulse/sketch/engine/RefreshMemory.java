package org.pairpulse.sketch.engine;

import org.pairpulse.sketch.table.HorizonTable;

/**
 * What a refresh keeps for the next one, so that its cost follows what changed rather than the table's size: the
 * closed panes' sums of tracked items and pairs per window ({@link ClosedPaneSums}) and each horizon's last known
 * order of pair slots (a table sorts on read; the next sort starts from the newest order a reader computed). Memory
 * only: it never changes a table, which equals one built without it
 * ({@link PairTables#build(PairEngine, PairTables.Options, RefreshMemory)} with null). Writer thread only; not in a
 * snapshot.
 */
final class RefreshMemory {
  final ClosedPaneSums items;
  final ClosedPaneSums pairs;
  /** Per horizon index, the pair slots of the last table, best first (null before the first refresh). */
  final int[][] lastOrder;
  /**
   * The last table's horizons (published ones, then the tracking decay), whose order a reader may have sorted since:
   * the next table's sort starts from it. Only the last table is held (its rows hold no reference to older ones).
   */
  HorizonTable[] lastTables;

  RefreshMemory(int windowCount, int itemCapacity, int pairCapacity, int horizonCount) {
    this.items = new ClosedPaneSums(windowCount, itemCapacity);
    this.pairs = new ClosedPaneSums(windowCount, pairCapacity);
    this.lastOrder = new int[horizonCount][];
  }
}
