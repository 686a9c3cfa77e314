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
  private final BasketKeys keys;
  /** Per horizon, the ring slot of the current basket's pane (0 for a decay, −1 if it left the window). */
  private final int[] paneOfHorizon;
  private final double[] weightOfHorizon;
  private final long[] eventPaneOfHorizon;
  private final boolean[] lateOfHorizon;
  /** The current basket's size class (see {@link org.pairpulse.sketch.stats.SizeClasses}). */
  private int basketClass;

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
      keys.itemSlots[i] = track(items, false, key, i, -1, i, keys.itemRows, i * keys.itemDepth, 1.0, 1.0, eventMillis);
    }
    for (int k = 0; k < pairCount; k++) {
      track(pairs, true, keys.pairKeys[k], keys.pairFirst[k], keys.pairSecond[k], k, keys.pairRows, k * keys.pairDepth,
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


  /**
   * Counts one key (an item, {@code second < 0}, or the pair of basket items {@code first} and
   * {@code second}) in the tracked table, after the sketches have it; {@code scratch} is its index among
   * the basket's items or pairs. {@code multiplier} is its count weight, {@code rankMultiplier} its rank weight
   * ({@link PairRanking}; equal for items). Returns its slot, or −1 when it is not tracked.
   */
  private int track(TrackedTable table, boolean pair, long key, int first, int second, int scratch, long[] rows,
      int rowOffset, double multiplier, double rankMultiplier, long eventMillis) {
    int slot = table.find(key);
    if (slot >= 0) {
      for (int h = 0; h < horizons.length; h++) {
        int pane = paneOfHorizon[h];
        if (pane < 0) {
          continue;
        }
        HorizonState state = horizons[h];
        if (!state.isWindow()) {
          table.decays[table.decayIndex(slot, state.kindOrdinal)] += multiplier * weightOfHorizon[h];
          if (h == trackingHorizon) {
            table.rank[slot] += rankMultiplier * weightOfHorizon[h];
          }
          if (table.classCount > 0) {
            table.classDecays[table.classDecayIndex(slot, state.kindOrdinal, basketClass)] += weightOfHorizon[h];
          }
        } else if (!(lateOfHorizon[h] && beforeAdmission(table, slot, h))) {
          table.addToPane(slot, state.paneCellOffset + pane, multiplier);
          if (table.classCount > 0) {
            table.classPanes[table.classPaneIndex(slot, state.paneCellOffset + pane, basketClass)]++;
          }
        }
      }
      return slot;
    }
    double[][] decayEstimates = pair ? keys.pairDecayEstimates : keys.itemDecayEstimates;
    double add = rankMultiplier * weightOfHorizon[trackingHorizon];
    if (!table.isFull()) {
      // never full so far: nothing was ever evicted or refused, so this key was never seen: exact start
      slot = admit(table, pair, key, first, second, eventMillis);
      for (int h = 0; h < horizons.length; h++) {
        int pane = paneOfHorizon[h];
        if (pane < 0) {
          continue;
        }
        HorizonState state = horizons[h];
        if (state.isWindow()) {
          table.addToPane(slot, state.paneCellOffset + pane, multiplier);
          if (table.classCount > 0) {
            table.classPanes[table.classPaneIndex(slot, state.paneCellOffset + pane, basketClass)]++;
          }
        } else {
          table.decays[table.decayIndex(slot, state.kindOrdinal)] = multiplier * weightOfHorizon[h];
          if (h == trackingHorizon) {
            table.rank[slot] = rankMultiplier * weightOfHorizon[h];
          }
          if (table.classCount > 0) {
            table.classDecays[table.classDecayIndex(slot, state.kindOrdinal, basketClass)] = weightOfHorizon[h];
          }
        }
      }
      table.placed(slot);
      return slot;
    }
    double estimate = decayEstimates[horizons[trackingHorizon].kindOrdinal][scratch];
    double rankEstimate = pair ? decayEstimates[pairs.decayCount][scratch] : estimate;
    // the lazy heap's root key is a lower bound of the minimum: most rejections need no heap work
    double min = rankEstimate > table.minRankLowerBound() ? table.minRank() : table.minRankLowerBound();
    if (!(rankEstimate > min) && !burstHeavy(table, pair, decayEstimates[horizons[burstHorizon].kindOrdinal][scratch])) {
      table.rejections++;
      return -1;
    }
    double rankStart = Math.min(rankEstimate, min + add);
    slot = admit(table, pair, key, first, second, eventMillis);
    // an item's rank is its tracking count, which Space-Saving bounds by min + add; a pair's count is not bounded by a
    // rank, so its tracking count starts from its estimate like the other decays
    initialiseFromSketches(table, slot, pair, rows, rowOffset, decayEstimates, scratch, pair ? estimate : rankStart,
        estimate);
    table.rank[slot] = rankStart;
    table.placed(slot);
    return slot;
  }

  private int admit(TrackedTable table, boolean pair, long key, int first, int second, long eventMillis) {
    if (!pair) {
      return table.admit(key, keys.itemLabels[first], null, key, 0L, eventMillis);
    }
    long ha = keys.itemHashes[first];
    long hb = keys.itemHashes[second];
    return table.admit(key, canonical(first), canonical(second), ha, hb, eventMillis);
  }

  /**
   * A pair's item label: the tracked item's own String when there is one (tracked just before, in this
   * basket), so labels are held once.
   */
  private String canonical(int item) {
    int slot = keys.itemSlots[item];
    return slot >= 0 && items.keys[slot] == keys.itemHashes[item] ? items.labelA[slot] : keys.itemLabels[item];
  }

  /**
   * True when the key weighs more than W / capacity in the burst horizon: it enters the table at once,
   * although its long-horizon weight may not beat the minimum yet. Its starting rank is still at most
   * {@code min + w}, so the Space-Saving bound on the tracking weights is kept.
   */
  private boolean burstHeavy(TrackedTable table, boolean pair, double burstEstimate) {
    HorizonState burst = horizons[burstHorizon];
    CountMinSketch sketch = pair ? burst.pairSketch[0] : burst.itemSketch[0];
    return burstEstimate > sketch.totalWeight() / table.capacity;
  }

  /**
   * A late basket (not in the newest pane) whose pane is older than the slot's admission pane: that
   * pane is read from the sketches, which already hold it, so the tracked cell must not count it too.
   */
  private boolean beforeAdmission(TrackedTable table, int slot, int h) {
    HorizonState state = horizons[h];
    long admitted = table.admissionPane[slot * table.windowCount + state.kindOrdinal];
    return admitted != Long.MIN_VALUE && eventPaneOfHorizon[h] < admitted;
  }

  /**
   * Fills a newly admitted slot from the count-min sketches (upper bounds) and records their error.
   * Windows: only the newest pane's cell starts from its sketch estimate; older panes stay in the
   * sketches and are read from there at query time (see {@link Counts}), so admission costs one
   * estimate per horizon, not one per pane.
   */
  private void initialiseFromSketches(TrackedTable table, int slot, boolean pair, long[] rows, int rowOffset,
      double[][] decayEstimates, int scratch, double trackingStart, double trackingEstimate) {
    if (table.classCount > 0) { // the starting estimates have no class: class counts begin at 0
      table.clearClassDecays(slot);
    }
    for (HorizonState state : horizons) {
      CountMinSketch[] sketches = pair ? state.pairSketch : state.itemSketch;
      int biasIndex = slot * table.horizonCount + state.index;
      if (state.isWindow()) {
        int newest = state.slotOf(state.newestPane);
        double estimate = sketches[newest].estimateHashed(rows, rowOffset);
        table.panes[table.paneIndex(slot, state.paneCellOffset + newest)] = (int) Math.min(estimate, Integer.MAX_VALUE);
        table.admissionPane[slot * table.windowCount + state.kindOrdinal] = state.newestPane;
        if (table.classCount > 0) {
          table.clearClassPane(slot, state.paneCellOffset + newest);
        }
        table.admissionBias[biasIndex] = estimate - sketches[newest].debiasedEstimateHashed(rows, rowOffset);
      } else if (state.index == trackingHorizon) {
        double lower = Math.min(trackingStart, Math.max(0, trackingEstimate - sketches[0].maxError()));
        table.decays[table.decayIndex(slot, state.kindOrdinal)] = trackingStart;
        table.admissionError[slot * table.decayCount + state.kindOrdinal] = trackingStart - lower;
        table.admissionBias[biasIndex] = trackingStart - Math.min(trackingStart, sketches[0].debiasedEstimateHashed(rows, rowOffset));
      } else {
        // the estimate was read right after this key's update; the debiased value is read now, after the
        // basket's other keys, which may have raised the same counters: cap it, so the point value stays
        // within the bounds
        double estimate = decayEstimates[state.kindOrdinal][scratch];
        table.decays[table.decayIndex(slot, state.kindOrdinal)] = estimate;
        table.admissionError[slot * table.decayCount + state.kindOrdinal] = Math.min(estimate, sketches[0].maxError());
        table.admissionBias[biasIndex] = estimate - Math.min(estimate, sketches[0].debiasedEstimateHashed(rows, rowOffset));
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
