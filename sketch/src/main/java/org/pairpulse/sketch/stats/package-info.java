/**
 * Pair statistics: pure functions from a pair's counts to its association measures.
 *
 * <p>{@link org.pairpulse.sketch.stats.PairCounts} holds N, n_a, n_b and n_ab of one pair in one
 * horizon, each count an {@link org.pairpulse.sketch.stats.Estimate} with the bounds its sketch
 * guarantees. {@link org.pairpulse.sketch.stats.PairMeasures#of} turns them into support,
 * confidence, lift with its interval, shrunk lift, leverage, conviction, Kulczynski, imbalance
 * ratio, G² and χ² (formulas and references on {@code PairMeasures}).
 * {@link org.pairpulse.sketch.stats.Measure} names the measures pairs can be ranked by.
 *
 * <p>Nothing here keeps state or allocates beyond the result; all types are immutable.
 */
package org.pairpulse.sketch.stats;
