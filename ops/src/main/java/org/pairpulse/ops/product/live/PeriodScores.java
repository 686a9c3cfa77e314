package org.pairpulse.ops.product.live;

import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.pairpulse.ops.product.evaluation.EvaluationMethod;
import org.pairpulse.ops.product.evaluation.Trial;
import org.pairpulse.serve.EvaluationStatus.MethodScore;
import org.pairpulse.serve.EvaluationStatus.Period;

/**
 * Hit rate at k and reciprocal-rank sums of every method, over all trials and per period of event time,
 * in fixed memory: the newest {@code keepPeriods} periods are kept (a live evaluation runs for months).
 * A trial older than the oldest kept period counts in the totals only. One writer ({@link #add}); readers
 * take {@link #methods()} and {@link #series()} under the same lock.
 */
final class PeriodScores {
  private final int k;
  private final long periodMillis;
  private final int keepPeriods;
  private final Totals all = new Totals(Long.MIN_VALUE);
  private final ArrayDeque<Totals> periods = new ArrayDeque<>();

  /** Counts of one period (or of everything), per method by {@link EvaluationMethod#ordinal()}. */
  private static final class Totals {
    final long startMillis;
    long trials;
    final long[] hits = new long[EvaluationMethod.values().length];
    final double[] reciprocal = new double[EvaluationMethod.values().length];

    Totals(long startMillis) {
      this.startMillis = startMillis;
    }

    void add(Trial trial, int k) {
      trials++;
      for (EvaluationMethod m : EvaluationMethod.values()) {
        int rank = trial.rank(m);
        if (rank >= 1 && rank <= k) {
          hits[m.ordinal()]++;
        }
        if (rank >= 1) {
          reciprocal[m.ordinal()] += 1.0 / rank;
        }
      }
    }

    double hitRate(EvaluationMethod m) {
      return trials == 0 ? 0 : (double) hits[m.ordinal()] / trials;
    }
  }

  /**
   * @param k the cutoff of the hit rate (the evaluation's k)
   * @param periodMillis length of a period of event time
   * @param keepPeriods how many of the newest periods are kept
   */
  PeriodScores(int k, long periodMillis, int keepPeriods) {
    if (k < 1 || periodMillis <= 0 || keepPeriods < 1) {
      throw new IllegalArgumentException("k, period and kept periods must be positive: " + k + ", " + periodMillis
          + ", " + keepPeriods);
    }
    this.k = k;
    this.periodMillis = periodMillis;
    this.keepPeriods = keepPeriods;
  }

  synchronized void add(Trial trial) {
    all.add(trial, k);
    long start = Math.floorDiv(trial.eventMillis(), periodMillis) * periodMillis;
    Totals newest = periods.peekLast();
    if (newest == null || start > newest.startMillis) {
      periods.addLast(newest = new Totals(start));
      while (periods.size() > keepPeriods) {
        periods.removeFirst();
      }
    } else if (start < newest.startMillis) {
      newest = null; // an older period (a late basket): find it, if still kept
      for (Totals t : periods) {
        if (t.startMillis == start) {
          newest = t;
        }
      }
      if (newest == null) {
        return;
      }
    }
    newest.add(trial, k);
  }

  /** Every method's scores over all trials, in {@link EvaluationMethod} order (served table first). */
  synchronized List<MethodScore> methods() {
    List<MethodScore> out = new ArrayList<>();
    for (EvaluationMethod m : EvaluationMethod.values()) {
      out.add(new MethodScore(m.wireName(), all.hitRate(m),
          all.trials == 0 ? 0 : all.reciprocal[m.ordinal()] / all.trials));
    }
    return out;
  }

  /** The kept periods, oldest first, with each method's hit rate. */
  synchronized List<Period> series() {
    List<Period> out = new ArrayList<>(periods.size());
    for (Totals t : periods) {
      Map<String, Double> rates = new java.util.LinkedHashMap<>();
      for (EvaluationMethod m : EvaluationMethod.values()) {
        rates.put(m.wireName(), t.hitRate(m));
      }
      out.add(new Period(t.startMillis, t.trials, rates));
    }
    return out;
  }

  synchronized long trials() {
    return all.trials;
  }
}
