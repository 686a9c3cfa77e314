package org.pairpulse.sketch.engine;

import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.stats.Estimate;

/**
 * Reads N, n_a and n_ab with bounds from an engine, as of its watermark.
 *
 * <p>A tracked key's count in a window is read pane by pane: panes newer than its admission pane are
 * exact; the admission pane holds the count-min estimate taken at admission plus exact counts since;
 * older panes are read from their sketches. The lower bound subtracts ε·W of each pane that is not
 * exact (W only grows, so today's ε·W bounds the error at admission). In a decay the count is the
 * estimate at admission plus exact counts since, less the error recorded at admission. An untracked key is read from the
 * sketches: the sum over live panes of their estimates, lower bound the sum of
 * {@code max(0, estimate − ε·W)} per pane. Each pane's bound holds with probability ≥ 1 − δ.
 */
final class Counts {
  private Counts() {}

  static double baskets(PairEngine engine, HorizonState state) {
    if (!state.isWindow()) {
      return state.basketWeight[0] / state.scaleAt(engine.watermarkMillis);
    }
    double sum = 0;
    for (int p = 0; p < state.paneCount; p++) {
      if (state.slotLive(p)) {
        sum += state.basketWeight[p];
      }
    }
    return sum;
  }

  static Estimate item(PairEngine engine, HorizonState state, long key) {
    int slot = engine.items.find(key);
    return slot >= 0 ? tracked(engine, engine.items, slot, state) : sketched(engine, state.itemSketch, state, key);
  }

  static Estimate pair(PairEngine engine, HorizonState state, long key) {
    int slot = engine.pairs.find(key);
    return slot >= 0 ? tracked(engine, engine.pairs, slot, state) : sketched(engine, state.pairSketch, state, key);
  }

  static Estimate tracked(PairEngine engine, TrackedTable table, int slot, HorizonState state) {
    return tracked(engine, table, slot, state, null, new double[3]);
  }

  /**
   * A tracked key's count; in a window, the panes before its admission come from {@code closed} when it is given
   * (the refresh's cache, bit-for-bit the same sums) and are summed from the sketches otherwise. {@code scratch}
   * holds three doubles.
   */
  static Estimate tracked(PairEngine engine, TrackedTable table, int slot, HorizonState state, ClosedPaneSums closed,
      double[] scratch) {
    return tracked(engine, table, slot, state, closed, scratch, state.isWindow() ? LiveSlots.of(state) : null);
  }

  /**
   * As {@link #tracked(PairEngine, TrackedTable, int, HorizonState, ClosedPaneSums, double[])}, with a window's live
   * slots read once for every key of a refresh ({@code live}, {@link LiveSlots#of}; ignored for a decay).
   */
  static Estimate tracked(PairEngine engine, TrackedTable table, int slot, HorizonState state, ClosedPaneSums closed,
      double[] scratch, LiveSlots live) {
    if (!state.isWindow()) {
      return trackedInDecay(table, slot, state, state.scaleAt(engine.watermarkMillis));
    }
    double bias = table.admissionBias[slot * table.horizonCount + state.index];
    long admittedPane = table.admissionPane[slot * table.windowCount + state.kindOrdinal];
    boolean pair = table == engine.pairs;
    CountMinSketch[] sketches = pair ? state.pairSketch : state.itemSketch;
    long key = table.keys[slot];
    double upper = 0;
    double lower = 0;
    double value = 0;
    if (admittedPane != Long.MIN_VALUE) { // before admission: still in the panes' sketches
      if (closed != null) {
        closed.read(state, live, sketches, slot, key, admittedPane, scratch);
      } else {
        preAdmission(live, sketches, key, admittedPane, scratch);
      }
      upper = scratch[0];
      lower = scratch[1];
      value = scratch[2];
    }
    for (int i = 0; i < live.count; i++) {
      int p = live.slots[i];
      long pane = live.panes[i];
      if (admittedPane == Long.MIN_VALUE || pane > admittedPane) { // exact since admission
        double count = table.panes[table.paneIndex(slot, state.paneCellOffset + p)];
        upper += count;
        lower += count;
        value += count;
      } else if (pane == admittedPane) { // sketch estimate at admission + exact since
        double count = table.panes[table.paneIndex(slot, state.paneCellOffset + p)];
        double paneLower = Math.max(0, count - sketches[p].maxError());
        upper += count;
        lower += paneLower;
        value += Math.max(paneLower, count - bias);
      }
    }
    lower = Math.min(lower, upper);
    return new Estimate(Math.min(upper, Math.max(lower, value)), lower, upper);
  }

  /**
   * A tracked key's count in decay {@code state}, whose weight at the watermark is {@code scale}
   * ({@code state.scaleAt(watermark)}, computed once per refresh): the estimate at admission plus exact counts since,
   * less the error recorded at admission.
   */
  static Estimate trackedInDecay(TrackedTable table, int slot, HorizonState state, double scale) {
    double bias = table.admissionBias[slot * table.horizonCount + state.index];
    double upper = table.decays[table.decayIndex(slot, state.kindOrdinal)];
    double lower = Math.max(0, upper - table.admissionError[slot * table.decayCount + state.kindOrdinal]);
    double value = Math.max(lower, upper - bias);
    return new Estimate(value / scale, lower / scale, upper / scale);
  }

  /**
   * {upper, lower, value} summed over the live panes of window {@code state} older than {@code admittedPane}, in
   * ring order, into {@code out}: the estimate, {@code max(0, estimate − ε·W)} and the debiased estimate of each.
   * These panes are closed; see {@link ClosedPaneSums}.
   */
  static void preAdmission(LiveSlots live, CountMinSketch[] sketches, long key, long admittedPane, double[] out) {
    double upper = 0;
    double lower = 0;
    double value = 0;
    for (int i = 0; i < live.count; i++) {
      int p = live.slots[i];
      if (live.panes[i] < admittedPane) {
        double estimate = sketches[p].estimate(key);
        upper += estimate;
        lower += Math.max(0, estimate - sketches[p].maxError());
        value += sketches[p].debiasedEstimate(key);
      }
    }
    out[0] = upper;
    out[1] = lower;
    out[2] = value;
  }

  static Estimate sketched(PairEngine engine, CountMinSketch[] sketches, HorizonState state, long key) {
    if (!state.isWindow()) {
      double scale = state.scaleAt(engine.watermarkMillis);
      double upper = sketches[0].estimate(key);
      double lower = Math.max(0, upper - sketches[0].maxError());
      double value = sketches[0].debiasedEstimate(key);
      return new Estimate(value / scale, lower / scale, upper / scale);
    }
    double upper = 0;
    double lower = 0;
    double value = 0;
    for (int p = 0; p < state.paneCount; p++) {
      if (state.slotLive(p)) {
        double estimate = sketches[p].estimate(key);
        upper += estimate;
        lower += Math.max(0, estimate - sketches[p].maxError());
        value += sketches[p].debiasedEstimate(key);
      }
    }
    lower = Math.min(lower, upper);
    return new Estimate(Math.min(upper, Math.max(lower, value)), lower, upper);
  }

  /** N_c per size class as of the watermark (decays in basket units): sums over the live panes. */
  static double[] classBaskets(PairEngine engine, HorizonState state) {
    return perClass(engine, state, state.classBaskets);
  }

  /** M_c per size class as of the watermark: the weight of item occurrences in baskets of class c. */
  static double[] classItems(PairEngine engine, HorizonState state) {
    return perClass(engine, state, state.classItems);
  }

  /** K_c per size class as of the watermark: the weight of ordered item pairs k(k − 1) in baskets of class c. */
  static double[] classPairSlots(PairEngine engine, HorizonState state) {
    return perClass(engine, state, state.classPairSlots);
  }

  /** Q_c per size class as of the watermark: K_c's pair slots, each times its basket's pair-cap step. */
  static double[] classWeightedSlots(PairEngine engine, HorizonState state) {
    return perClass(engine, state, state.classWeightedSlots);
  }

  /** Baskets of unknown class (restored from a format-1 snapshot) as of the watermark. */
  static double unclassedBaskets(PairEngine engine, HorizonState state) {
    if (!state.isWindow()) {
      return state.unclassedBaskets[0] / state.scaleAt(engine.watermarkMillis);
    }
    double sum = 0;
    for (int p = 0; p < state.paneCount; p++) {
      if (state.slotLive(p)) {
        sum += state.unclassedBaskets[p];
      }
    }
    return sum;
  }

  private static double[] perClass(PairEngine engine, HorizonState state, double[] cells) {
    int classes = state.classCount;
    double[] sum = new double[classes];
    if (!state.isWindow()) {
      double scale = state.scaleAt(engine.watermarkMillis);
      for (int c = 0; c < classes; c++) {
        sum[c] = cells[c] / scale;
      }
      return sum;
    }
    for (int p = 0; p < state.paneCount; p++) {
      if (state.slotLive(p)) {
        for (int c = 0; c < classes; c++) {
          sum[c] += cells[p * classes + c];
        }
      }
    }
    return sum;
  }

  /**
   * The part of tracked item {@code slot}'s count in {@code state} known exactly per size class: what was counted
   * since its admission (windows: the panes from its admission pane on; decays: the decay cell's exact part).
   * The rest of its count (panes before admission, read from the sketches, and the admission estimate) has no
   * class.
   */
  static double[] knownByClass(PairEngine engine, HorizonState state, int slot) {
    return knownByClass(engine, state, slot, state.isWindow() ? LiveSlots.of(state) : null,
        state.scaleAt(engine.watermarkMillis));
  }

  /**
   * As {@link #knownByClass(PairEngine, HorizonState, int)}, with a window's live slots and a decay's weight at the
   * watermark ({@code scale}) read once per refresh.
   */
  static double[] knownByClass(PairEngine engine, HorizonState state, int slot, LiveSlots live, double scale) {
    TrackedTable table = engine.items;
    int classes = table.classCount;
    double[] known = new double[classes];
    if (!state.isWindow()) {
      for (int c = 0; c < classes; c++) {
        known[c] = table.classDecays[table.classDecayIndex(slot, state.kindOrdinal, c)] / scale;
      }
      return known;
    }
    long admittedPane = table.admissionPane[slot * table.windowCount + state.kindOrdinal];
    for (int i = 0; i < live.count; i++) {
      int p = live.slots[i];
      if (admittedPane == Long.MIN_VALUE || live.panes[i] >= admittedPane) {
        int from = table.classPaneIndex(slot, state.paneCellOffset + p, 0);
        for (int c = 0; c < classes; c++) {
          known[c] += table.classPanes[from + c];
        }
      }
    }
    return known;
  }
}
