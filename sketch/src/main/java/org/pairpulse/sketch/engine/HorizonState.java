package org.pairpulse.sketch.engine;

import java.util.Arrays;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The sketches of one horizon: per pane (a decay has one) an item sketch, a pair sketch and the basket
 * weight N; and per pane and basket-size class c the basket weight N_c, the item weight M_c (distinct
 * items k times basket weight), the pair-slot weight K_c (k(k − 1) times basket weight) and the same times the
 * pair cap's step Q_c: the strata of the size-adjusted null model and the variance of its pair counts. Baskets restored from a snapshot
 * that had no classes (format 1) are unclassed: {@code unclassedBaskets}.
 *
 * <h2>Windows</h2>
 * A ring of {@code paneCount} panes; pane index {@code q = floor(t / paneMillis)} lives in ring slot
 * {@code q mod paneCount}. The window holds panes {@code newestPane − paneCount + 1 .. newestPane}; when a
 * newer pane starts, the ring slots it reuses are cleared (a pane leaves whole).
 *
 * <h2>Decays: forward decay</h2>
 * A basket at time {@code t} adds {@code g(t) = 2^((t − L) / halfLife)} for a landmark {@code L}; the
 * decayed value at time {@code T} is the stored sum divided by {@code g(T)} (Cormode, Shkapenyuk,
 * Srivastava, Xu, "Forward decay: a practical time decay model for streaming systems", ICDE 2009).
 * Landmarks are multiples of the half-life, so moving the landmark by {@code k} half-lives multiplies
 * every stored value by {@code 2^−k}, an exact operation in binary floating point (a rescale). Ratios
 * such as lift and confidence are invariant to the common scale and need no division at all.
 */
final class HorizonState {
  /** Rescale once the newest weight would exceed 2^64 (far from double overflow even when summed). */
  static final int RESCALE_AFTER_HALF_LIVES = 64;

  final HorizonSpec spec;
  final int index;
  /** Windows: offset of this window's panes among all window panes (tracked tables' pane cells). */
  final int paneCellOffset;
  final int paneCount;
  final long paneMillis;
  final long halfLifeMillis;
  final CountMinSketch[] itemSketch;
  final CountMinSketch[] pairSketch;
  final double[] basketWeight;
  /** Basket-size classes per pane. */
  final int classCount;
  /** N_c of pane p at {@code p * classCount + c}. */
  final double[] classBaskets;
  /** M_c of pane p at {@code p * classCount + c}: the weight of item occurrences in baskets of class c. */
  final double[] classItems;
  /** K_c of pane p at {@code p * classCount + c}: the weight of ordered item pairs k(k − 1) in baskets of class c. */
  final double[] classPairSlots;
  /**
   * Q_c of pane p at {@code p * classCount + c}: the pair-slot weight k(k − 1) times the pair cap's step s (1 for a
   * basket under the cap, see {@link PairSampling}) in baskets of class c. Q_c / K_c is the class's pair-count
   * dispersion (see {@link SizeStrata}).
   */
  final double[] classWeightedSlots;
  /** Baskets of pane p whose class is unknown (restored from a format-1 snapshot). */
  final double[] unclassedBaskets;
  /** Window: pane index held by each ring slot (Long.MIN_VALUE: never used). */
  final long[] paneOfSlot;
  /** Window: newest pane index seen (Long.MIN_VALUE before the first basket). */
  long newestPane = Long.MIN_VALUE;
  /** Decay: landmark L in epoch millis, a multiple of the half-life (Long.MIN_VALUE before the first basket). */
  long landmarkMillis = Long.MIN_VALUE;
  /**
   * Window: bumped whenever the closed panes change as a whole (a pane leaves or starts, an engine is merged in):
   * {@link ClosedPaneSums} entries of an older generation are stale.
   */
  long closedPaneGeneration;
  /** Window: a clock ticked by every late basket; {@code lateStamp[p]} is its value at ring slot p's last one. */
  long lateClock;
  final long[] lateStamp;
  /** Window: ordinal among windows; decay: ordinal among decays. */
  final int kindOrdinal;

  HorizonState(HorizonSpec spec, int index, int paneCellOffset, int kindOrdinal, EngineConfig config) {
    this(spec, index, paneCellOffset, kindOrdinal, config, null, null);
  }

  /**
   * A decay may be handed its two sketches ({@code decayItem}, {@code decayPair}): the engine interleaves
   * the sketches of all its decays, which take every basket alike (see {@link CountMinSketch#interleaved}).
   */
  HorizonState(HorizonSpec spec, int index, int paneCellOffset, int kindOrdinal, EngineConfig config,
      CountMinSketch decayItem, CountMinSketch decayPair) {
    this.spec = spec;
    this.index = index;
    this.paneCellOffset = paneCellOffset;
    this.kindOrdinal = kindOrdinal;
    this.paneCount = spec.paneCount();
    this.paneMillis = spec.paneMillis();
    this.halfLifeMillis = spec.halfLifeMillis();
    int itemWidth = CountMinSketch.widthFor(config.itemEpsilon());
    int itemDepth = CountMinSketch.depthFor(config.itemDelta());
    int pairWidth = CountMinSketch.widthFor(spec.isWindow() ? config.pairEpsilon() : config.decayPairEpsilon());
    int pairDepth = CountMinSketch.depthFor(config.pairDelta());
    this.itemSketch = new CountMinSketch[paneCount];
    this.pairSketch = new CountMinSketch[paneCount];
    for (int p = 0; p < paneCount; p++) {
      if (decayItem != null) {
        itemSketch[p] = decayItem;
        pairSketch[p] = decayPair;
        continue;
      }
      // one seed for all panes and horizons: panes of a window must align to be summed and merged
      itemSketch[p] = new CountMinSketch(itemWidth, itemDepth, config.updateRule(), config.seed());
      pairSketch[p] = new CountMinSketch(pairWidth, pairDepth, config.updateRule(), pairSeed(config));
    }
    this.basketWeight = new double[paneCount];
    this.classCount = config.sizeClasses().count();
    this.classBaskets = new double[paneCount * classCount];
    this.classItems = new double[paneCount * classCount];
    this.classPairSlots = new double[paneCount * classCount];
    this.classWeightedSlots = new double[paneCount * classCount];
    this.unclassedBaskets = new double[paneCount];
    this.paneOfSlot = new long[paneCount];
    Arrays.fill(paneOfSlot, Long.MIN_VALUE);
    this.lateStamp = new long[paneCount];
  }

  /** A late basket landed in ring slot {@code slot} (not the newest pane): its sketches changed. */
  void markLate(int slot) {
    lateStamp[slot] = ++lateClock;
  }

  /** The newest late stamp among the live panes older than {@code pane} (0: none had a late basket). */
  long lateStampBefore(long pane) {
    long newest = 0;
    for (long q = oldestLivePane(); q < pane && q <= newestPane; q++) {
      newest = Math.max(newest, lateStamp[slotOf(q)]);
    }
    return newest;
  }

  /** Seed of every pair sketch (item sketches use the configuration's seed). */
  static long pairSeed(EngineConfig config) {
    return config.seed() ^ 0x9A1L;
  }

  boolean isWindow() {
    return spec.isWindow();
  }

  long paneOf(long eventMillis) {
    return Math.floorDiv(eventMillis, paneMillis);
  }

  int slotOf(long pane) {
    return (int) Math.floorMod(pane, (long) paneCount);
  }

  /** Oldest pane index still in the window. */
  long oldestLivePane() {
    return newestPane == Long.MIN_VALUE ? Long.MIN_VALUE : newestPane - paneCount + 1;
  }

  boolean slotLive(int slot) {
    long pane = paneOfSlot[slot];
    return pane != Long.MIN_VALUE && pane >= oldestLivePane();
  }

  void clearSlot(int slot, long newPane) {
    itemSketch[slot].clear();
    pairSketch[slot].clear();
    basketWeight[slot] = 0;
    Arrays.fill(classBaskets, slot * classCount, (slot + 1) * classCount, 0.0);
    Arrays.fill(classItems, slot * classCount, (slot + 1) * classCount, 0.0);
    Arrays.fill(classPairSlots, slot * classCount, (slot + 1) * classCount, 0.0);
    Arrays.fill(classWeightedSlots, slot * classCount, (slot + 1) * classCount, 0.0);
    unclassedBaskets[slot] = 0;
    paneOfSlot[slot] = newPane;
    lateStamp[slot] = 0;
  }

  /** Multiplies the decay's N, N_c, M_c, K_c, Q_c by {@code factor} (a rescale; the sketches are scaled by the engine). */
  void scaleBasketWeights(double factor) {
    basketWeight[0] *= factor;
    unclassedBaskets[0] *= factor;
    for (int c = 0; c < classCount; c++) {
      classBaskets[c] *= factor;
      classItems[c] *= factor;
      classPairSlots[c] *= factor;
      classWeightedSlots[c] *= factor;
    }
  }

  /** Forward-decay weight g(t) = 2^((t − L)/halfLife). */
  double decayWeight(long eventMillis) {
    return Math.pow(2.0, (double) (eventMillis - landmarkMillis) / halfLifeMillis);
  }

  /** The landmark a basket at {@code eventMillis} should use (a multiple of the half-life). */
  long landmarkFor(long eventMillis) {
    return Math.floorDiv(eventMillis, halfLifeMillis) * halfLifeMillis;
  }

  boolean needsRescale(long eventMillis) {
    return eventMillis - landmarkMillis > RESCALE_AFTER_HALF_LIVES * halfLifeMillis;
  }

  /** Divide stored decay values by this to get values as of {@code asOfMillis}. */
  double scaleAt(long asOfMillis) {
    return landmarkMillis == Long.MIN_VALUE ? 1.0 : decayWeight(asOfMillis);
  }

  long stateBytes() {
    long bytes = 8L * basketWeight.length * 3 + 8L * classBaskets.length * 4;
    for (int p = 0; p < paneCount; p++) {
      bytes += itemSketch[p].stateBytes() + pairSketch[p].stateBytes();
    }
    return bytes;
  }
}
