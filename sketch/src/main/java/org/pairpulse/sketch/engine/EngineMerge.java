package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.pairpulse.sketch.cms.CountMinSketch;

/**
 * Merges the state of an engine built over a disjoint stream (another partition) into this one.
 * Basket-size classes merge like the counts they split: N_c, M_c, K_c and Q_c add pane by pane; a tracked item's exactly
 * counted class parts add where both sides counted exactly, and what a side read from its sketches has no class.
 *
 * <ul>
 *   <li>Linear parts add exactly: windows first advance to the newer of the two newest panes, decays
 *       to the later landmark (an exact rescale by 2^−k); then sketches and N add pane by pane.</li>
 *   <li>Tracked tables merge by the mergeable-summary rule for Space-Saving (Agarwal, Cormode, Huang,
 *       Phillips, Wei, Yi, "Mergeable summaries", PODS 2012): every key of either table is kept with the
 *       sum of both sides' counts, where a side that does not track the key contributes its own upper
 *       bound for it (nothing if that side was never full, which means it never saw the key; else its
 *       count-min estimates, recorded as inherited error; its rank estimate, capped by its smallest tracked rank, and
 *       for items the tracking count likewise, since an item's rank is its tracking count); then the largest
 *       {@code capacity} ranks stay. Every key whose rank weight exceeds (W₁ + W₂) / capacity stays tracked
 *       (W: the rank weights, see {@link PairRanking}).</li>
 * </ul>
 */
final class EngineMerge {
  private EngineMerge() {}

  static void merge(PairEngine into, PairEngine other) {
    if (!into.config().equals(other.config())) {
      throw new IllegalArgumentException("cannot merge engines with different configurations:\n  " + into.config()
          + "\n  " + other.config());
    }
    if (other.baskets == 0 && other.watermarkMillis == Long.MIN_VALUE) {
      return;
    }
    // 1. align time: windows to the newest pane of either, decays to the later landmark
    double[] otherScale = new double[into.horizons.length];
    for (int h = 0; h < into.horizons.length; h++) {
      HorizonState mine = into.horizons[h];
      HorizonState theirs = other.horizons[h];
      otherScale[h] = 1.0;
      if (mine.isWindow()) {
        if (theirs.newestPane != Long.MIN_VALUE
            && (mine.newestPane == Long.MIN_VALUE || theirs.newestPane > mine.newestPane)) {
          into.advanceWindow(mine, theirs.newestPane);
        }
      } else if (theirs.landmarkMillis != Long.MIN_VALUE) {
        if (mine.landmarkMillis == Long.MIN_VALUE) {
          mine.landmarkMillis = theirs.landmarkMillis;
        } else if (theirs.landmarkMillis > mine.landmarkMillis) {
          into.moveLandmark(mine, theirs.landmarkMillis);
        } else {
          long halfLives = (mine.landmarkMillis - theirs.landmarkMillis) / mine.halfLifeMillis;
          otherScale[h] = Math.scalb(1.0, (int) -Math.min(halfLives, 2000));
        }
      }
    }
    // 2. tracked tables, from both sides' sketches as they are before the sketches merge
    mergeTable(into, other, into.items, other.items, false, otherScale);
    mergeTable(into, other, into.pairs, other.pairs, true, otherScale);
    // 3. linear parts
    for (int h = 0; h < into.horizons.length; h++) {
      HorizonState mine = into.horizons[h];
      HorizonState theirs = other.horizons[h];
      for (int p = 0; p < mine.paneCount; p++) {
        if (!otherPaneLive(mine, theirs, p)) {
          continue;
        }
        addScaled(mine.itemSketch[p], theirs.itemSketch[p], otherScale[h]);
        addScaled(mine.pairSketch[p], theirs.pairSketch[p], otherScale[h]);
        if (h == into.trackingHorizon) {
          addScaled(into.pairRankSketch, other.pairRankSketch, otherScale[h]);
        }
        mine.basketWeight[p] += theirs.basketWeight[p] * otherScale[h];
        mine.unclassedBaskets[p] += theirs.unclassedBaskets[p] * otherScale[h];
        for (int c = p * mine.classCount; c < (p + 1) * mine.classCount; c++) {
          mine.classBaskets[c] += theirs.classBaskets[c] * otherScale[h];
          mine.classItems[c] += theirs.classItems[c] * otherScale[h];
          mine.classPairSlots[c] += theirs.classPairSlots[c] * otherScale[h];
          mine.classWeightedSlots[c] += theirs.classWeightedSlots[c] * otherScale[h];
        }
      }
    }
    into.watermarkMillis = Math.max(into.watermarkMillis, other.watermarkMillis);
    into.baskets += other.baskets;
    into.pairUpdates += other.pairUpdates;
    into.expiredWindowUpdates += other.expiredWindowUpdates;
    into.sampling().restore(into.sampling().cappedBaskets() + other.sampling().cappedBaskets(),
        into.sampling().skippedPairs() + other.sampling().skippedPairs());
  }

  /** True when the other engine's ring slot p holds a pane that is live in this engine's window. */
  private static boolean otherPaneLive(HorizonState mine, HorizonState theirs, int p) {
    if (!mine.isWindow()) {
      return theirs.landmarkMillis != Long.MIN_VALUE;
    }
    return theirs.paneOfSlot[p] != Long.MIN_VALUE && theirs.paneOfSlot[p] == mine.paneOfSlot[p] && mine.slotLive(p);
  }

  private static void addScaled(CountMinSketch into, CountMinSketch other, double scale) {
    if (scale == 1.0) {
      into.merge(other);
    } else {
      CountMinSketch scaled = other.copy();
      scaled.scale(scale);
      into.merge(scaled);
    }
  }

  /** One merged entry before the top-capacity cut. */
  private static final class Entry {
    long key;
    String labelA;
    String labelB;
    long hashA;
    long hashB;
    long admittedAtMillis;
    /** Window pane counts, materialised (panes before admission read from the owner's sketches). */
    double[] panes;
    /** Decay counts (forward units of the merged landmark). */
    double[] decays;
    /** The Space-Saving rank (forward units of the tracking decay's merged landmark). */
    double rank;
    long[] admissionPane;
    double[] admissionError;
    /** Per horizon: estimate − debiased estimate of the sketch-based part of the admission pane / decay. */
    double[] bias;
    /** Items: the exactly counted part per size class, per window pane cell and per decay (else empty). */
    double[] classPanes;
    double[] classDecays;
  }

  /** Bias of a merged window whose admission pane is {@code merged}: a side contributes only if its own admission pane is it. */
  private static double mergedBias(long merged, long admittedA, double biasA, long admittedB, double biasB) {
    return (admittedA == merged ? biasA : 0) + (admittedB == merged ? biasB : 0);
  }

  private static void mergeTable(PairEngine into, PairEngine other, TrackedTable mine, TrackedTable theirs,
      boolean pair, double[] otherScale) {
    List<Entry> entries = new ArrayList<>(mine.size() + theirs.size());
    for (int s = 0; s < mine.size(); s++) {
      Entry entry = copyOut(mine, s, into, into, null);
      int t = theirs.find(mine.keys[s]);
      if (t >= 0) {
        addTracked(entry, theirs, t, into, other, otherScale);
      } else if (theirs.isFull()) {
        addUntracked(entry, theirs, into, other, pair, otherScale);
      }
      entries.add(entry);
    }
    for (int t = 0; t < theirs.size(); t++) {
      if (mine.find(theirs.keys[t]) >= 0) {
        continue;
      }
      Entry entry = copyOut(theirs, t, into, other, otherScale);
      if (mine.isFull()) {
        addUntracked(entry, mine, into, into, pair, null);
      }
      entries.add(entry);
    }
    entries.sort(Comparator.comparingDouble((Entry e) -> e.rank).reversed());
    int keep = Math.min(entries.size(), mine.capacity);
    long evicted = entries.size() - keep;
    for (int s = 0; s < keep; s++) {
      Entry e = entries.get(s);
      mine.keys[s] = e.key;
      mine.labelA[s] = e.labelA;
      mine.labelB[s] = e.labelB;
      mine.hashA[s] = e.hashA;
      mine.hashB[s] = e.hashB;
      mine.admittedAtMillis[s] = e.admittedAtMillis;
      int classes = mine.classCount;
      for (HorizonState state : into.horizons) { // panes before admission are read from the merged sketches
        long admitted = state.isWindow() ? e.admissionPane[state.kindOrdinal] : Long.MIN_VALUE;
        for (int p = 0; admitted != Long.MIN_VALUE && p < state.paneCount; p++) {
          if (state.paneOfSlot[p] < admitted) {
            e.panes[state.paneCellOffset + p] = 0;
            java.util.Arrays.fill(e.classPanes, (state.paneCellOffset + p) * classes,
                (state.paneCellOffset + p + 1) * classes, 0);
          }
        }
      }
      for (int c = 0; c < mine.paneCells; c++) {
        for (int k = 0; k < classes; k++) {
          mine.classPanes[mine.classPaneIndex(s, c, k)] = (int) Math.min(Math.round(e.classPanes[c * classes + k]),
              Integer.MAX_VALUE);
        }
      }
      for (int d = 0; d < mine.decayCount; d++) {
        for (int k = 0; k < classes; k++) {
          mine.classDecays[mine.classDecayIndex(s, d, k)] = e.classDecays[d * classes + k];
        }
      }
      for (int c = 0; c < mine.paneCells; c++) {
        mine.panes[mine.paneIndex(s, c)] = (int) Math.min(Math.round(e.panes[c]), Integer.MAX_VALUE);
      }
      for (int d = 0; d < mine.decayCount; d++) {
        mine.decays[mine.decayIndex(s, d)] = e.decays[d];
      }
      mine.rank[s] = e.rank;
      System.arraycopy(e.admissionPane, 0, mine.admissionPane, s * mine.windowCount, mine.windowCount);
      System.arraycopy(e.admissionError, 0, mine.admissionError, s * mine.decayCount, mine.decayCount);
      System.arraycopy(e.bias, 0, mine.admissionBias, s * mine.horizonCount, mine.horizonCount);
    }
    mine.admissions += theirs.admissions;
    mine.evictions += theirs.evictions + evicted;
    mine.rejections += theirs.rejections;
    mine.rebuild(keep);
  }

  /**
   * Copies slot s of {@code table} (owned by {@code owner}) into an entry laid out for {@code into}, with
   * every live window pane materialised: panes before the slot's admission pane read from the owner's
   * sketches, the rest from its cells.
   */
  private static Entry copyOut(TrackedTable table, int s, PairEngine into, PairEngine owner, double[] scale) {
    Entry e = new Entry();
    e.key = table.keys[s];
    e.labelA = table.labelA[s];
    e.labelB = table.labelB[s];
    e.hashA = table.hashA[s];
    e.hashB = table.hashB[s];
    e.admittedAtMillis = table.admittedAtMillis[s];
    e.panes = new double[table.paneCells];
    e.decays = new double[table.decayCount];
    e.admissionPane = new long[table.windowCount];
    e.admissionError = new double[table.decayCount];
    e.bias = new double[table.horizonCount];
    int classes = table.classCount;
    e.classPanes = new double[table.paneCells * classes];
    e.classDecays = new double[table.decayCount * classes];
    boolean pair = table == owner.pairs;
    for (HorizonState state : into.horizons) {
      HorizonState source = owner.horizons[state.index];
      if (state.isWindow()) {
        long admitted = table.admissionPane[s * table.windowCount + state.kindOrdinal];
        e.admissionPane[state.kindOrdinal] = admitted;
        e.bias[state.index] = table.admissionBias[s * table.horizonCount + state.index];
        for (int p = 0; p < state.paneCount; p++) {
          boolean live = owner == into ? state.slotLive(p) : otherPaneLive(state, source, p);
          if (!live) {
            continue;
          }
          long pane = source.paneOfSlot[p];
          boolean sketched = admitted != Long.MIN_VALUE && pane < admitted;
          e.panes[state.paneCellOffset + p] = sketched
              ? (pair ? source.pairSketch[p] : source.itemSketch[p]).estimate(e.key)
              : table.panes[table.paneIndex(s, state.paneCellOffset + p)];
          for (int k = 0; !sketched && k < classes; k++) {
            e.classPanes[(state.paneCellOffset + p) * classes + k] = table.classPanes[table.classPaneIndex(s,
                state.paneCellOffset + p, k)];
          }
        }
      } else {
        double factor = scale == null ? 1.0 : scale[state.index];
        e.decays[state.kindOrdinal] = table.decays[table.decayIndex(s, state.kindOrdinal)] * factor;
        if (state.kindOrdinal == table.trackingDecay) {
          e.rank = table.rank[s] * factor;
        }
        e.admissionError[state.kindOrdinal] = table.admissionError[s * table.decayCount + state.kindOrdinal] * factor;
        e.bias[state.index] = table.admissionBias[s * table.horizonCount + state.index] * factor;
        for (int k = 0; k < classes; k++) {
          e.classDecays[state.kindOrdinal * classes + k] =
              table.classDecays[table.classDecayIndex(s, state.kindOrdinal, k)] * factor;
        }
      }
    }
    return e;
  }

  /** Adds the other side's tracked counts for the same key. */
  private static void addTracked(Entry e, TrackedTable theirs, int t, PairEngine into, PairEngine other, double[] scale) {
    Entry add = copyOut(theirs, t, into, other, scale);
    for (int c = 0; c < e.panes.length; c++) {
      e.panes[c] += add.panes[c];
    }
    for (int d = 0; d < e.decays.length; d++) {
      e.decays[d] += add.decays[d];
    }
    e.rank += add.rank;
    for (int d = 0; d < e.admissionError.length; d++) {
      e.admissionError[d] += add.admissionError[d];
    }
    for (int i = 0; i < e.classPanes.length; i++) {
      e.classPanes[i] += add.classPanes[i];
    }
    for (int i = 0; i < e.classDecays.length; i++) {
      e.classDecays[i] += add.classDecays[i];
    }
    for (HorizonState state : into.horizons) {
      if (state.isWindow()) {
        int w = state.kindOrdinal;
        long merged = Math.max(e.admissionPane[w], add.admissionPane[w]);
        e.bias[state.index] = mergedBias(merged, e.admissionPane[w], e.bias[state.index], add.admissionPane[w], add.bias[state.index]);
        e.admissionPane[w] = merged;
      } else {
        e.bias[state.index] += add.bias[state.index];
      }
    }
    e.admittedAtMillis = Math.min(e.admittedAtMillis, add.admittedAtMillis);
  }

  /**
   * Adds what a side that does not track the key (and was full, so may have seen it) can say: its
   * count-min estimates, an upper bound, recorded as inherited error.
   */
  private static void addUntracked(Entry e, TrackedTable side, PairEngine into, PairEngine sideEngine, boolean pair,
      double[] scale) {
    double sideMin = side.minRank();
    for (HorizonState state : into.horizons) {
      HorizonState source = sideEngine.horizons[state.index];
      CountMinSketch[] sketches = pair ? source.pairSketch : source.itemSketch;
      if (state.isWindow()) {
        for (int p = 0; p < state.paneCount; p++) {
          boolean live = sideEngine == into ? state.slotLive(p) : otherPaneLive(state, source, p);
          if (live) {
            e.panes[state.paneCellOffset + p] += sketches[p].estimate(e.key);
          }
        }
        int w = state.kindOrdinal;
        long sidePane = state.newestPane; // all of the side's contribution is sketch estimates
        int newestSlot = state.slotOf(state.newestPane);
        boolean newestLive = sideEngine == into ? state.slotLive(newestSlot) : otherPaneLive(state, source, newestSlot);
        double sideBias = newestLive
            ? sketches[newestSlot].estimate(e.key) - sketches[newestSlot].debiasedEstimate(e.key) : 0;
        long merged = Math.max(e.admissionPane[w], sidePane);
        e.bias[state.index] = mergedBias(merged, e.admissionPane[w], e.bias[state.index], sidePane, sideBias);
        e.admissionPane[w] = merged;
      } else if (source.landmarkMillis != Long.MIN_VALUE) {
        double factor = scale == null ? 1.0 : scale[state.index];
        double estimate = sketches[0].estimate(e.key);
        if (state.kindOrdinal == side.trackingDecay) {
          double rank = pair ? Math.min(sideEngine.pairRankSketch.estimate(e.key), sideMin) : Math.min(estimate, sideMin);
          e.rank += rank * factor;
          if (!pair) {
            estimate = rank; // an item's rank is its tracking count
          }
        }
        e.decays[state.kindOrdinal] += estimate * factor;
        e.admissionError[state.kindOrdinal] += estimate * factor;
        e.bias[state.index] += (estimate - Math.min(estimate, sketches[0].debiasedEstimate(e.key))) * factor;
      }
    }
  }
}
