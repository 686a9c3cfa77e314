package org.pairpulse.sketch.engine;

import java.util.Arrays;
import org.pairpulse.sketch.cms.CountMinSketch;

/**
 * The refresh's memory of what a tracked key's count holds from before its admission, per window: the sums over
 * the live panes older than its admission pane of the sketch estimate, its lower bound {@code max(0, est − ε·W)}
 * and its debiased value (see {@link Counts}). Those panes are closed (not the newest), so their sketches change
 * only when a pane leaves the window or an engine is merged in (each bumps the window's
 * {@link HorizonState#closedPaneGeneration}) or when a late basket lands in one (it stamps that pane,
 * {@link HorizonState#markLate}). An entry is reused while its key, its admission pane and the window's generation
 * are those it was summed under and no pane it covers took a late basket since, so a refresh reads a key's closed
 * panes about once per pane that closes instead of at every refresh (each read costs {@code depth} random counter
 * loads per pane).
 *
 * <p>The sums are formed in the same order as {@link Counts#preAdmission} forms them, so a cached value is
 * bit-for-bit the one a refresh without the cache computes ({@code RefreshCacheTest}). Writer thread only; not part
 * of a snapshot (a restored engine starts empty).
 */
final class ClosedPaneSums {
  private final int capacity;
  /** Per window and slot at {@code window * capacity + slot}. */
  private final long[] keys;
  private final long[] admittedPanes;
  private final long[] generations;
  /** The window's late clock when the entry was summed. */
  private final long[] lateStamps;
  private final double[] upper;
  private final double[] lower;
  private final double[] value;
  long hits;
  long misses;

  ClosedPaneSums(int windowCount, int capacity) {
    this.capacity = capacity;
    int cells = windowCount * capacity;
    this.keys = new long[cells];
    this.admittedPanes = new long[cells];
    this.generations = new long[cells];
    Arrays.fill(generations, Long.MIN_VALUE);
    this.lateStamps = new long[cells];
    this.upper = new double[cells];
    this.lower = new double[cells];
    this.value = new double[cells];
  }

  /**
   * Writes {upper, lower, value} of {@code key}'s panes before {@code admittedPane} in {@code state} into
   * {@code out}, from the cache when it is current.
   */
  void read(HorizonState state, LiveSlots live, CountMinSketch[] sketches, int slot, long key, long admittedPane,
      double[] out) {
    int cell = state.kindOrdinal * capacity + slot;
    if (generations[cell] == state.closedPaneGeneration && keys[cell] == key && admittedPanes[cell] == admittedPane
        && (lateStamps[cell] == state.lateClock || live.lateStampBefore(admittedPane) <= lateStamps[cell])) {
      hits++;
      out[0] = upper[cell];
      out[1] = lower[cell];
      out[2] = value[cell];
      return;
    }
    misses++;
    Counts.preAdmission(live, sketches, key, admittedPane, out);
    generations[cell] = state.closedPaneGeneration;
    lateStamps[cell] = state.lateClock;
    keys[cell] = key;
    admittedPanes[cell] = admittedPane;
    upper[cell] = out[0];
    lower[cell] = out[1];
    value[cell] = out[2];
  }

  /** Heap bytes of the cache (not state: not in {@link PairEngine#stateBytes()}). */
  long bytes() {
    return 8L * keys.length * 7;
  }
}
