package org.pairpulse.serve;

import java.util.Optional;

/**
 * The test-then-train evaluation's running result, when the wiring runs one (the ops evaluation);
 * the dashboard shows it when present.
 */
@FunctionalInterface
public interface EvaluationStatus {
  /** The newest summary, or empty when no evaluation runs. Must not block. */
  Optional<Summary> summary();

  /**
   * @param baskets baskets evaluated
   * @param k suggestions asked for per hidden item
   * @param hitRate share of hidden items found among the top k
   * @param meanReciprocalRank mean of 1/rank (0 when missed)
   * @param horizon the horizon the suggestions used
   */
  record Summary(long baskets, int k, double hitRate, double meanReciprocalRank, String horizon) {}

  static EvaluationStatus none() {
    return Optional::empty;
  }
}
