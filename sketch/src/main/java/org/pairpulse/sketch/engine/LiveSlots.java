package org.pairpulse.sketch.engine;

/**
 * A window's live ring slots in ring order, with the pane each holds, and the newest late stamp before each pane:
 * read from the {@link HorizonState} once per refresh instead of once per key. {@link Counts} sums a tracked key's
 * panes over these slots in the order the ring gives them (skipping a dead slot adds nothing), so a sum is bit for
 * bit the one a loop over every slot forms. Valid until the state changes (a refresh reads a still state).
 */
final class LiveSlots {
  /** Live ring slots, ascending. */
  final int[] slots;
  /** The pane held by each of {@link #slots}. */
  final long[] panes;
  final int count;
  private final HorizonState state;
  /** {@code newestLate[k]}: the newest late stamp among the panes {@code oldest .. oldest + k − 1}; null: none live. */
  private final long[] newestLate;
  private final long oldestPane;

  private LiveSlots(HorizonState state) {
    this.state = state;
    int paneCount = state.paneCount;
    int[] s = new int[paneCount];
    long[] q = new long[paneCount];
    int n = 0;
    for (int p = 0; p < paneCount; p++) {
      if (state.slotLive(p)) {
        s[n] = p;
        q[n] = state.paneOfSlot[p];
        n++;
      }
    }
    this.slots = s;
    this.panes = q;
    this.count = n;
    if (state.newestPane == Long.MIN_VALUE) {
      this.newestLate = null;
      this.oldestPane = Long.MIN_VALUE;
    } else {
      this.oldestPane = state.oldestLivePane();
      this.newestLate = new long[paneCount + 1];
      long newest = 0;
      for (int k = 0; k < paneCount; k++) { // panes oldest .. newestPane, as HorizonState.lateStampBefore walks them
        newest = Math.max(newest, state.lateStamp[state.slotOf(oldestPane + k)]);
        newestLate[k + 1] = newest;
      }
    }
  }

  /** The live slots of window {@code state} as it is now. */
  static LiveSlots of(HorizonState state) {
    return new LiveSlots(state);
  }

  /** The window's oldest live pane (Long.MIN_VALUE before its first basket). */
  long oldestPane() {
    return oldestPane;
  }

  /** The newest late stamp among the panes older than the newest: the closed panes' ({@code lateStampBefore}). */
  long newestLateStamp() {
    return newestLate == null ? state.lateStampBefore(Long.MIN_VALUE) : newestLate[state.paneCount - 1];
  }

  /** {@link HorizonState#lateStampBefore(long)}, from a table read once. */
  long lateStampBefore(long pane) {
    if (newestLate == null) {
      return state.lateStampBefore(pane);
    }
    if (pane <= oldestPane) {
      return 0;
    }
    return newestLate[(int) Math.min(pane - oldestPane, state.paneCount)];
  }
}
