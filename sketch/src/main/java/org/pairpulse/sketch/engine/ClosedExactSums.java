package org.pairpulse.sketch.engine;

import java.util.Arrays;

/**
 * The refresh's memory of a settled tracked key's exact counts in a window's closed panes. A key is settled in a
 * window when it was admitted before the window's oldest live pane (or counted exactly from the start): its count
 * there is the sum of its exact pane counts alone, with no sketch part, and an item's count per size class
 * ({@link Counts#knownByClass}) likewise. Those counts are integers ({@code int} cells), so their sum in doubles is
 * exact in any order (every partial sum is an integer below 2^53): the sum of the closed panes kept here plus the
 * newest pane's count is, bit for bit, the ring-order sum a refresh forms from scratch.
 *
 * <p>An entry is reused while its key, its admission pane and the window's {@link HorizonState#closedPaneGeneration}
 * (bumped when a pane starts or leaves and on a merge) are those it was summed under and no late basket landed in a
 * closed pane since ({@link LiveSlots#newestLateStamp()} against the window's late clock at the entry). A key
 * admitted anew is admitted in a live pane, so it is not settled and never reads an entry. Writer thread only; not
 * in a snapshot.
 */
final class ClosedExactSums {
  private final int capacity;
  /** Per window and slot at {@code window * capacity + slot}. */
  private final long[] keys;
  private final long[] admittedPanes;
  private final long[] generations;
  private final long[] lateStamps;
  private final double[] sums;
  /** Items: per cell, {@code classCount} sums of the closed panes' counts by size class (allocated on first use). */
  private double[] byClass;
  private int classCount;

  ClosedExactSums(int windowCount, int capacity) {
    this.capacity = capacity;
    int cells = windowCount * capacity;
    this.keys = new long[cells];
    this.admittedPanes = new long[cells];
    this.generations = new long[cells];
    Arrays.fill(generations, Long.MIN_VALUE);
    this.lateStamps = new long[cells];
    this.sums = new double[cells];
  }

  /** Whether {@code admittedPane} leaves no sketch part and no admission pane in the window's live panes. */
  static boolean settled(LiveSlots live, long admittedPane) {
    return admittedPane == Long.MIN_VALUE || admittedPane < live.oldestPane();
  }

  /**
   * The settled key's count in the window: its closed live panes' exact counts (kept) plus the newest pane's. With
   * {@code known} (an item's, {@code classCount} long) its counts per size class are written there the same way.
   */
  double count(HorizonState state, LiveSlots live, TrackedTable table, int slot, double[] known) {
    int cell = state.kindOrdinal * capacity + slot;
    long key = table.keys[slot];
    long admittedPane = table.admissionPane[slot * table.windowCount + state.kindOrdinal];
    int classes = known == null ? 0 : known.length;
    if (classes > 0 && byClass == null) {
      classCount = classes;
      byClass = new double[keys.length * classes];
      Arrays.fill(generations, Long.MIN_VALUE); // no entry holds its classes yet
    }
    boolean current = generations[cell] == state.closedPaneGeneration && keys[cell] == key
        && admittedPanes[cell] == admittedPane && live.newestLateStamp() <= lateStamps[cell];
    if (!current) {
      double sum = 0;
      if (classes > 0) {
        Arrays.fill(byClass, cell * classCount, (cell + 1) * classCount, 0.0);
      }
      for (int i = 0; i < live.count; i++) {
        if (live.panes[i] == state.newestPane) {
          continue;
        }
        int paneCell = state.paneCellOffset + live.slots[i];
        sum += table.panes[table.paneIndex(slot, paneCell)];
        for (int c = 0; c < classes; c++) {
          byClass[cell * classCount + c] += table.classPanes[table.classPaneIndex(slot, paneCell, c)];
        }
      }
      sums[cell] = sum;
      keys[cell] = key;
      admittedPanes[cell] = admittedPane;
      generations[cell] = state.closedPaneGeneration;
      lateStamps[cell] = state.lateClock;
    }
    int newestCell = state.paneCellOffset + state.slotOf(state.newestPane);
    for (int c = 0; c < classes; c++) {
      known[c] = byClass[cell * classCount + c] + table.classPanes[table.classPaneIndex(slot, newestCell, c)];
    }
    return sums[cell] + table.panes[table.paneIndex(slot, newestCell)];
  }

  /** Heap bytes of the memory (not state). */
  long bytes() {
    return 8L * keys.length * 5 + (byClass == null ? 0 : 8L * byClass.length);
  }
}
