package org.pairpulse.serve;

import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;

/**
 * The test-then-train evaluation's running result, when the wiring runs one (the ops evaluation);
 * the dashboard shows it when present: the served table's hit rate with its baselines, and their course
 * over time.
 */
@FunctionalInterface
public interface EvaluationStatus {
  /** The newest summary, or empty when no evaluation runs. Must not block. */
  Optional<Summary> summary();

  /**
   * @param baskets baskets evaluated
   * @param k suggestions asked for per hidden item
   * @param hitRate share of hidden items found among the top k (the served table)
   * @param meanReciprocalRank mean of 1/rank (0 when missed)
   * @param horizon the horizon the suggestions used
   * @param methods every method's scores over all trials, the served table first, then the baselines (for
   *     instance a table rebuilt once a day, and the most popular items); empty when only the served table is
   *     evaluated
   * @param series the scores per period of event time, oldest first (bounded; empty when not kept)
   */
  record Summary(long baskets, int k, double hitRate, double meanReciprocalRank, String horizon,
      List<MethodScore> methods, List<Period> series) {

    public Summary {
      Objects.requireNonNull(horizon, "horizon");
      methods = List.copyOf(methods);
      series = List.copyOf(series);
    }

    /** The served table's scores alone. */
    public Summary(long baskets, int k, double hitRate, double meanReciprocalRank, String horizon) {
      this(baskets, k, hitRate, meanReciprocalRank, horizon, List.of(), List.of());
    }
  }

  /**
   * @param method a method's stable name ({@code incremental}, {@code nightly}, {@code popular})
   * @param hitRate share of hidden items among its top k
   * @param meanReciprocalRank mean of 1/rank (0 when missed)
   */
  record MethodScore(String method, double hitRate, double meanReciprocalRank) {}

  /**
   * @param startMillis start of the period (event time, epoch millis)
   * @param baskets baskets evaluated in the period
   * @param hitRate per method name, its hit rate at k in the period
   */
  record Period(long startMillis, long baskets, Map<String, Double> hitRate) {
    public Period {
      hitRate = Map.copyOf(hitRate);
    }
  }

  static EvaluationStatus none() {
    return Optional::empty;
  }
}
