package org.pairpulse.sketch.engine;

/**
 * Counters of one engine since it was created (or restored), for metrics.
 *
 * @param baskets baskets added
 * @param pairUpdates pair occurrences counted (after the per-basket cap)
 * @param cappedBaskets baskets whose pairs exceeded {@code maxPairsPerBasket} and were sampled
 * @param pairsSkippedByCap pair occurrences left out by sampling (their weight is carried by the sampled ones)
 * @param expiredWindowUpdates basket-horizon updates dropped because the basket's pane had already left the window
 * @param trackedPairs pairs currently tracked
 * @param pairAdmissions pairs admitted to the tracked table
 * @param pairEvictions pairs evicted from it
 * @param trackedItems items currently tracked
 * @param watermarkMillis newest event time seen (Long.MIN_VALUE before the first basket)
 */
public record EngineStats(
    long baskets,
    long pairUpdates,
    long cappedBaskets,
    long pairsSkippedByCap,
    long expiredWindowUpdates,
    int trackedPairs,
    long pairAdmissions,
    long pairEvictions,
    int trackedItems,
    long watermarkMillis) {}
