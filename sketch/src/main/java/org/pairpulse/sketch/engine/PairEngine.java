package org.pairpulse.sketch.engine;

import java.util.Collection;
import java.util.List;
import java.util.Objects;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.hash.ItemHash;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;

/**
 * The counting state of pairpulse: item and pair counts over several horizons in fixed memory, and the
 * tracked pairs for which statistics are published.
 *
 * <h2>What one basket does</h2>
 * {@link #addBasket} takes a basket's event time and items. Duplicate items count once. For every
 * horizon the basket lands in one cell (the pane of its event time, or the decay) with weight 1 (window)
 * or the forward-decay weight (decay). N, every item and every pair (at most
 * {@code maxPairsPerBasket} of them, see {@link PairSampling}) go into the cell's count-min sketches, then
 * into the tracked tables. Tracked keys hold counts per cell, exact from the moment they were admitted
 * and count-min estimates (with their error bound) for the time before.
 *
 * <h2>Time</h2>
 * Event time only. Windows advance when a basket from a newer pane arrives or when {@link #advanceTo}
 * is called (an idle stream). A basket whose pane has left a window counts in the other horizons only
 * ({@link EngineStats#expiredWindowUpdates()}); deciding what is too late to accept at all is the caller's
 * job (allowed lateness).
 *
 * <h2>Memory</h2>
 * Fixed by {@link EngineConfig}: all arrays are allocated up front; {@link #stateBytes()} reports them.
 *
 * <h2>Threading</h2>
 * Single writer, many readers through snapshots: an engine is not thread-safe. One thread (the writer)
 * calls {@link #addBasket}, {@link #advanceTo}, {@link #merge} and {@link #refresh}. {@code refresh}
 * returns an immutable {@link org.pairpulse.sketch.table.PairTable} that any number of reader threads
 * may use while the writer goes on; publish it through a volatile or atomic reference
 * ({@link org.pairpulse.sketch.table.PairTableHolder}). To read counts from another thread, take a
 * {@link #copy()} on the writer thread.
 */
public final class PairEngine {
  private final EngineConfig config;
  final HorizonState[] horizons;
  /** Window panes over all windows: the tracked tables' pane cells per key. */
  final int paneCells;
  /** Index of the internal decay that ranks tracked keys (the last horizon). */
  final int trackingHorizon;
  /** Index of the decay whose heavy keys enter the tracked tables at once. */
  final int burstHorizon;
  /** Horizons published in pair tables: the configured ones, without the internal tracking decay. */
  final int publishedHorizons;
  final TrackedTable items;
  final TrackedTable pairs;
  private final PairSampling sampling;
  /**
   * The pairs' rank weights in the tracking decay ({@link PairRanking}): a count-min sketch interleaved with the decays'
   * pair sketches (one more column beside theirs, so a pair's update touches the same cache lines), rescaled with the
   * tracking decay. Its estimates decide which untracked pair may enter the tracked table.
   */
  final CountMinSketch pairRankSketch;
  /** What a refresh keeps for the next one (see {@link RefreshMemory}). */
  final RefreshMemory refreshMemory;

  long watermarkMillis = Long.MIN_VALUE;
  long baskets;
  long pairUpdates;
  long expiredWindowUpdates;

  /** The current basket's keys, row hashes and decay estimates (scratch, reused). */
  final BasketKeys keys;
  /** Per horizon, the ring slot of the current basket's pane (0 for a decay, −1 if it left the window). */
  final int[] paneOfHorizon;
  final double[] weightOfHorizon;
  final long[] eventPaneOfHorizon;
  final boolean[] lateOfHorizon;
  /** The current basket's size class (see {@link org.pairpulse.sketch.stats.SizeClasses}). */
  int basketClass;
  /** Counts the basket's keys in the tracked tables and admits new ones. */
  private final TrackedUpdates tracked;

  public PairEngine(EngineConfig config) {
    this.config = Objects.requireNonNull(config, "config");
    List<HorizonSpec> specs = new java.util.ArrayList<>(config.horizons());
    specs.add(config.trackingSpec()); // internal: ranks the tracked tables, never published
    this.publishedHorizons = config.horizons().size();
    this.horizons = new HorizonState[specs.size()];
    int offset = 0;
    int windows = 0;
    int decays = 0;
    int burst = -1;
    int decayCount = (int) specs.stream().filter(spec -> !spec.isWindow()).count();
    CountMinSketch[] decayItems = CountMinSketch.interleaved(decayCount, CountMinSketch.widthFor(config.itemEpsilon()),
        CountMinSketch.depthFor(config.itemDelta()), config.updateRule(), config.seed());
    CountMinSketch[] decayPairs = CountMinSketch.interleaved(decayCount + 1,
        CountMinSketch.widthFor(config.decayPairEpsilon()), CountMinSketch.depthFor(config.pairDelta()), config.updateRule(),
        HorizonState.pairSeed(config));
    this.pairRankSketch = decayPairs[decayCount];
    for (int h = 0; h < specs.size(); h++) {
      HorizonSpec spec = specs.get(h);
      int ordinal = spec.isWindow() ? windows++ : decays++;
      horizons[h] = spec.isWindow()
          ? new HorizonState(spec, h, offset, ordinal, config)
          : new HorizonState(spec, h, -1, ordinal, config, decayItems[ordinal], decayPairs[ordinal]);
      if (spec.name().equals(config.burstHorizon())) {
        burst = h;
      }
      if (spec.isWindow()) {
        offset += spec.paneCount();
      }
    }
    this.paneCells = offset;
    this.trackingHorizon = specs.size() - 1;
    this.burstHorizon = burst;
    int trackingDecay = horizons[trackingHorizon].kindOrdinal;
    this.items = new TrackedTable(config.trackedItemCapacity(), paneCells, trackingDecay, windows, decays, horizons.length,
        config.sizeClasses().count());
    this.pairs = new TrackedTable(config.trackedPairCapacity(), paneCells, trackingDecay, windows, decays, horizons.length);
    this.sampling = new PairSampling(config.maxPairsPerBasket());
    this.refreshMemory = new RefreshMemory(windows, config.trackedItemCapacity(), config.trackedPairCapacity(),
        horizons.length);
    this.paneOfHorizon = new int[horizons.length];
    this.weightOfHorizon = new double[horizons.length];
    this.eventPaneOfHorizon = new long[horizons.length];
    this.lateOfHorizon = new boolean[horizons.length];
    this.keys = new BasketKeys(horizons[0].itemSketch[0].depth(), horizons[0].pairSketch[0].depth(), decayCount + 1);
    this.tracked = new TrackedUpdates(this);
  }

  public EngineConfig config() {
    return config;
  }

  /** Adds one basket; see the class comment. Null or empty item ids are ignored. */
  public void addBasket(long eventMillis, Collection<String> basketItems) {
    addBasket(eventMillis, basketItems.toArray(new String[0]));
  }

  /** Adds one basket; see the class comment. Null or empty item ids are ignored. */
  public void addBasket(long eventMillis, String... basketItems) {
    int distinct = keys.loadItems(basketItems);
    if (distinct == 0) {
      return;
    }
    baskets++;
    if (eventMillis > watermarkMillis) {
      watermarkMillis = eventMillis;
    }
    placeInHorizons(eventMillis);
    for (int h = 0; h < horizons.length; h++) {
      if (lateOfHorizon[h] && paneOfHorizon[h] >= 0) {
        horizons[h].markLate(paneOfHorizon[h]); // a closed pane's sketches change
      }
    }
    basketClass = config.sizeClasses().classOf(distinct);
    int pairCount = keys.selectPairs(distinct, sampling);
    double pairRank = keys.pairWeight * config.pairRanking().factor(distinct);
    double slots = (double) distinct * (distinct - 1);
    double weightedSlots = slots * keys.pairWeight;
    for (int h = 0; h < horizons.length; h++) {
      int pane = paneOfHorizon[h];
      if (pane >= 0) {
        HorizonState state = horizons[h];
        double weight = weightOfHorizon[h];
        int cell = pane * state.classCount + basketClass;
        state.basketWeight[pane] += weight;
        state.classBaskets[cell] += weight;
        state.classItems[cell] += weight * distinct;
        state.classPairSlots[cell] += weight * slots;
        state.classWeightedSlots[cell] += weight * weightedSlots;
      }
    }
    keys.hashRows(distinct, pairCount, horizons[0].itemSketch[0], horizons[0].pairSketch[0]);
    addToSketches(distinct, pairCount, pairRank);
    for (int i = 0; i < distinct; i++) {
      long key = keys.itemHashes[i];
      keys.itemSlots[i] = tracked.track(items, false, key, i, -1, i, keys.itemRows, i * keys.itemDepth, 1.0, 1.0, eventMillis);
    }
    for (int k = 0; k < pairCount; k++) {
      tracked.track(pairs, true, keys.pairKeys[k], keys.pairFirst[k], keys.pairSecond[k], k, keys.pairRows, k * keys.pairDepth,
          keys.pairWeight, pairRank, eventMillis);
    }
    pairUpdates += pairCount;
  }



  /**
   * Adds the basket's items and pairs to every horizon's current sketches, sketch by sketch: the
   * counter updates of one sketch do not depend on each other, so the processor overlaps their cache
   * misses. The tracking decay's pass also adds each pair's rank weight {@code pairRank} to {@link #pairRankSketch}.
   */
  private void addToSketches(int distinct, int pairCount, double pairRank) {
    for (int h = 0; h < horizons.length; h++) {
      int pane = paneOfHorizon[h];
      if (pane < 0) {
        continue;
      }
      HorizonState state = horizons[h];
      double weight = weightOfHorizon[h];
      CountMinSketch itemSketch = state.itemSketch[pane];
      CountMinSketch pairSketch = state.pairSketch[pane];
      double pairAdd = keys.pairWeight * weight;
      if (state.isWindow()) {
        for (int i = 0; i < distinct; i++) {
          itemSketch.addHashed(keys.itemRows, i * keys.itemDepth, weight);
        }
        for (int k = 0; k < pairCount; k++) {
          pairSketch.addHashed(keys.pairRows, k * keys.pairDepth, pairAdd);
        }
      } else { // keep each key's decay estimates, read while the counters are in cache, for the tracked tables
        double[] itemEstimates = keys.itemDecayEstimates[state.kindOrdinal];
        double[] pairEstimates = keys.pairDecayEstimates[state.kindOrdinal];
        for (int i = 0; i < distinct; i++) {
          itemEstimates[i] = itemSketch.addHashed(keys.itemRows, i * keys.itemDepth, weight);
        }
        for (int k = 0; k < pairCount; k++) {
          pairEstimates[k] = pairSketch.addHashed(keys.pairRows, k * keys.pairDepth, pairAdd);
        }
        if (h == trackingHorizon) {
          double[] rankEstimates = keys.pairDecayEstimates[pairs.decayCount];
          double rankAdd = pairRank * weight;
          for (int k = 0; k < pairCount; k++) {
            rankEstimates[k] = pairRankSketch.addHashed(keys.pairRows, k * keys.pairDepth, rankAdd);
          }
        }
      }
    }
  }


  /** Chooses each horizon's cell and weight for a basket at {@code eventMillis}, advancing as needed. */
  private void placeInHorizons(long eventMillis) {
    for (int h = 0; h < horizons.length; h++) {
      HorizonState state = horizons[h];
      if (state.isWindow()) {
        long pane = state.paneOf(eventMillis);
        if (state.newestPane == Long.MIN_VALUE || pane > state.newestPane) {
          advanceWindow(state, pane);
        }
        eventPaneOfHorizon[h] = pane;
        lateOfHorizon[h] = pane < state.newestPane;
        if (pane < state.oldestLivePane()) {
          expiredWindowUpdates++;
          paneOfHorizon[h] = -1;
          weightOfHorizon[h] = 0;
        } else {
          paneOfHorizon[h] = state.slotOf(pane);
          weightOfHorizon[h] = 1.0;
        }
      } else {
        if (state.landmarkMillis == Long.MIN_VALUE) {
          state.landmarkMillis = state.landmarkFor(eventMillis);
        } else if (state.needsRescale(eventMillis)) {
          moveLandmark(state, state.landmarkFor(eventMillis));
        }
        paneOfHorizon[h] = 0;
        weightOfHorizon[h] = state.decayWeight(eventMillis);
      }
    }
  }

  /** Starts pane {@code newPane} in a window, clearing the ring slots of panes that leave. */
  void advanceWindow(HorizonState state, long newPane) {
    long first = state.newestPane == Long.MIN_VALUE
        ? newPane - state.paneCount + 1
        : Math.max(state.newestPane + 1, newPane - state.paneCount + 1);
    state.closedPaneGeneration++;
    for (long q = first; q <= newPane; q++) {
      int slot = state.slotOf(q);
      state.clearSlot(slot, q);
      items.clearPane(state.paneCellOffset + slot);
      pairs.clearPane(state.paneCellOffset + slot);
    }
    state.newestPane = newPane;
  }

  /** Moves a decay's landmark forward by whole half-lives: multiplies every stored value by 2^−k exactly. */
  void moveLandmark(HorizonState state, long newLandmarkMillis) {
    long halfLives = (newLandmarkMillis - state.landmarkMillis) / state.halfLifeMillis;
    if (halfLives <= 0) {
      return;
    }
    double factor = Math.scalb(1.0, (int) -Math.min(halfLives, 2000));
    if (factor == 0.0) {
      factor = Double.MIN_NORMAL; // everything older than ~2000 half-lives is gone; keep sketches valid
    }
    state.itemSketch[0].scale(factor);
    state.pairSketch[0].scale(factor);
    if (state.index == trackingHorizon) {
      pairRankSketch.scale(factor);
    }
    state.scaleBasketWeights(factor);
    items.scaleDecay(state.kindOrdinal, state.index, factor);
    pairs.scaleDecay(state.kindOrdinal, state.index, factor);
    state.landmarkMillis = newLandmarkMillis;
  }

  /**
   * Advances every window to the pane of {@code eventMillis} (an idle stream: panes leave although no
   * basket arrives). Moves the watermark. Never goes back.
   */
  public void advanceTo(long eventMillis) {
    if (eventMillis <= watermarkMillis) {
      return;
    }
    watermarkMillis = eventMillis;
    for (HorizonState state : horizons) {
      if (state.isWindow()) {
        long pane = state.paneOf(eventMillis);
        if (state.newestPane != Long.MIN_VALUE && pane > state.newestPane) {
          advanceWindow(state, pane);
        }
      } else if (state.landmarkMillis != Long.MIN_VALUE && state.needsRescale(eventMillis)) {
        moveLandmark(state, state.landmarkFor(eventMillis));
      }
    }
  }

  /** Newest event time seen or advanced to; Long.MIN_VALUE before anything. */
  public long watermarkMillis() {
    return watermarkMillis;
  }


  // ---------------------------------------------------------------- queries (writer thread)

  HorizonState horizon(String name) {
    for (HorizonState state : horizons) {
      if (state.spec.name().equals(name)) {
        return state;
      }
    }
    throw new IllegalArgumentException("unknown horizon '" + name + "'; known: "
        + config.horizons().stream().map(HorizonSpec::name).toList());
  }

  /** N: baskets in {@code horizon} as of the watermark (decayed for a decay horizon). */
  public double basketCount(String horizon) {
    return Counts.baskets(this, horizon(horizon));
  }

  /** n_a with bounds, as of the watermark. */
  public Estimate itemCount(String item, String horizon) {
    return Counts.item(this, horizon(horizon), ItemHash.of(item));
  }

  /** n_ab with bounds, as of the watermark: tracked counts if the pair is tracked, else the sketches. */
  public Estimate pairCount(String itemA, String itemB, String horizon) {
    return Counts.pair(this, horizon(horizon), ItemHash.pairKey(ItemHash.of(itemA), ItemHash.of(itemB)));
  }

  /**
   * ε·W of pair counts in {@code horizon} as of the watermark: the most a pair count read from the
   * count-min sketches may overcount (each pane's bound holding with probability ≥ 1 − δ). A window sums
   * its live panes' ε·W; a decay gives its sketch's ε·W in basket units. For metrics and health pages.
   */
  public double pairErrorBound(String horizon) {
    return errorBound(horizon(horizon), true);
  }

  /** ε·W of item counts in {@code horizon} as of the watermark; see {@link #pairErrorBound}. */
  public double itemErrorBound(String horizon) {
    return errorBound(horizon(horizon), false);
  }

  private double errorBound(HorizonState state, boolean pair) {
    CountMinSketch[] sketches = pair ? state.pairSketch : state.itemSketch;
    if (!state.isWindow()) {
      return sketches[0].maxError() / state.scaleAt(watermarkMillis);
    }
    double sum = 0;
    for (int p = 0; p < state.paneCount; p++) {
      if (state.slotLive(p)) {
        sum += sketches[p].maxError();
      }
    }
    return sum;
  }

  /** True when {@code {a, b}} is in the tracked-pair table. */
  public boolean isTracked(String itemA, String itemB) {
    return pairs.find(ItemHash.pairKey(ItemHash.of(itemA), ItemHash.of(itemB))) >= 0;
  }

  /** Tracked pairs now. */
  public int trackedPairCount() {
    return pairs.size();
  }

  /** Counters for metrics. */
  public EngineStats stats() {
    return new EngineStats(baskets, pairUpdates, sampling.cappedBaskets(), sampling.skippedPairs(),
        expiredWindowUpdates, pairs.size(), pairs.admissions, pairs.evictions, items.size(), watermarkMillis);
  }

  /** Heap bytes of the state: sketches and tracked tables. Fixed by the configuration (labels aside). */
  public long stateBytes() {
    long bytes = items.stateBytes(null) + pairs.stateBytes(items) + pairRankSketch.stateBytes();
    for (HorizonState state : horizons) {
      bytes += state.stateBytes();
    }
    return bytes;
  }

  /** The total rank weight W of the pairs in the tracking decay (forward units; {@link PairRanking}), for tests. */
  double trackingPairWeight() {
    return pairRankSketch.totalWeight();
  }

  // ---------------------------------------------------------------- refresh, copy, merge

  /** Builds an immutable pair table from the current state; see {@link PairTables}. Writer thread only. */
  public org.pairpulse.sketch.table.PairTable refresh(PairTables.Options options) {
    return PairTables.build(this, options);
  }

  /** A deep copy (through the snapshot codec, so it is as exact as a restore). */
  public PairEngine copy() {
    return Snapshots.read(Snapshots.write(this));
  }

  /**
   * Adds the state of {@code other} (a disjoint stream with the same configuration) into this engine.
   * Sketches and basket counts add exactly; tracked tables merge by the mergeable-summary rule; see
   * {@link EngineMerge}.
   */
  public void merge(PairEngine other) {
    EngineMerge.merge(this, other);
    for (HorizonState state : horizons) {
      state.closedPaneGeneration++; // every pane's sketches took the other side's
    }
  }

  PairSampling sampling() {
    return sampling;
  }
}
