package org.pairpulse.sketch.engine;

import org.pairpulse.sketch.cms.CountMinSketch;

/**
 * The tracked tables' side of {@link PairEngine#addBasket}: counts a basket's keys in the tracked tables once the
 * sketches have them, and admits an untracked key when its rank estimate beats the table's minimum (Space-Saving with
 * an admission test, see {@link TrackedTable}), filling the new slot from the sketches. It reads the engine's state
 * for the current basket (panes, weights, size class, decay estimates); single writer, like the engine.
 */
final class TrackedUpdates {
  private final PairEngine engine;
  private final HorizonState[] horizons;
  private final BasketKeys keys;
  private final TrackedTable items;
  private final int trackingHorizon;
  private final int burstHorizon;
  private final int[] paneOfHorizon;
  private final double[] weightOfHorizon;
  private final long[] eventPaneOfHorizon;
  private final boolean[] lateOfHorizon;
  /** Index of the pairs' rank estimates among {@link BasketKeys#pairDecayEstimates} (after the decays'). */
  private final int rankLane;

  TrackedUpdates(PairEngine engine) {
    this.engine = engine;
    this.horizons = engine.horizons;
    this.keys = engine.keys;
    this.items = engine.items;
    this.trackingHorizon = engine.trackingHorizon;
    this.burstHorizon = engine.burstHorizon;
    this.paneOfHorizon = engine.paneOfHorizon;
    this.weightOfHorizon = engine.weightOfHorizon;
    this.eventPaneOfHorizon = engine.eventPaneOfHorizon;
    this.lateOfHorizon = engine.lateOfHorizon;
    this.rankLane = engine.pairs.decayCount;
  }

  /**
   * Counts one key (an item, {@code second < 0}, or the pair of basket items {@code first} and
   * {@code second}) in the tracked table, after the sketches have it; {@code scratch} is its index among
   * the basket's items or pairs. {@code multiplier} is its count weight, {@code rankMultiplier} its rank weight
   * ({@link PairRanking}; equal for items). Returns its slot, or −1 when it is not tracked.
   */
  int track(TrackedTable table, boolean pair, long key, int first, int second, int scratch, long[] rows,
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
            table.classDecays[table.classDecayIndex(slot, state.kindOrdinal, engine.basketClass)] += weightOfHorizon[h];
          }
        } else if (!(lateOfHorizon[h] && beforeAdmission(table, slot, h))) {
          table.addToPane(slot, state.paneCellOffset + pane, multiplier);
          if (table.classCount > 0) {
            table.classPanes[table.classPaneIndex(slot, state.paneCellOffset + pane, engine.basketClass)]++;
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
            table.classPanes[table.classPaneIndex(slot, state.paneCellOffset + pane, engine.basketClass)]++;
          }
        } else {
          table.decays[table.decayIndex(slot, state.kindOrdinal)] = multiplier * weightOfHorizon[h];
          if (h == trackingHorizon) {
            table.rank[slot] = rankMultiplier * weightOfHorizon[h];
          }
          if (table.classCount > 0) {
            table.classDecays[table.classDecayIndex(slot, state.kindOrdinal, engine.basketClass)] = weightOfHorizon[h];
          }
        }
      }
      table.placed(slot);
      return slot;
    }
    double estimate = decayEstimates[horizons[trackingHorizon].kindOrdinal][scratch];
    double rankEstimate = pair ? decayEstimates[rankLane][scratch] : estimate;
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
}
