package org.pairpulse.ops.product.evaluation;

import java.util.List;
import java.util.Objects;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.sketch.stats.Measure;

/**
 * What the test-then-train evaluation samples and asks.
 *
 * <table>
 *   <caption>Settings</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>share</td><td>0.10</td><td>share of baskets evaluated, chosen by a hash of the basket id and the seed
 *       (the same baskets in every run); only baskets with at least 2 distinct items take part</td></tr>
 *   <tr><td>seed</td><td>1</td><td>seed of the sampling and of the hidden-item choice</td></tr>
 *   <tr><td>k</td><td>10</td><td>suggestions asked for; hit rates are reported at 1, 5 and k</td></tr>
 *   <tr><td>horizon</td><td>recent</td><td>the horizon the suggestions and the popular baseline read</td></tr>
 *   <tr><td>measure</td><td>shrunk_lift</td><td>the suggester's scoring measure (serve's default)</td></tr>
 *   <tr><td>minConfidence / maxConfidence</td><td>0 / 1</td><td>the suggester's confidence band: off, because the
 *       evaluation asks how well the table predicts the hidden item; the band is a rule for choosing offers</td></tr>
 *   <tr><td>includeBundles</td><td>true</td><td>bundle pairs may predict (a hidden case is predicted by its
 *       handset)</td></tr>
 *   <tr><td>ranking</td><td>posterior</td><td>the suggester's ranking (serve's {@code ranking} option)</td></tr>
 * </table>
 *
 * @param share the share of baskets evaluated, in [0, 1]
 * @param seed the sampling seed
 * @param k suggestions asked for, 1..100
 * @param horizon the horizon suggestions use
 * @param measure the scoring measure
 * @param minConfidence lower end of the confidence band
 * @param maxConfidence upper end of the confidence band
 * @param includeBundles whether bundle pairs may produce suggestions
 * @param ranking how the suggester orders candidates ({@code association} or {@code posterior})
 */
public record EvaluationSettings(double share, long seed, int k, String horizon, Measure measure, double minConfidence,
    double maxConfidence, boolean includeBundles, SuggestionRanking ranking) {

  public static final double DEFAULT_SHARE = 0.10;
  public static final int DEFAULT_K = 10;
  public static final int MAX_K = 100;
  /** The evaluation's default ranking (see README-ops-analysis for the measurement behind it). */
  public static final SuggestionRanking DEFAULT_RANKING = SuggestionRanking.POSTERIOR;

  public EvaluationSettings {
    Objects.requireNonNull(horizon, "horizon");
    Objects.requireNonNull(measure, "measure");
    Objects.requireNonNull(ranking, "ranking");
    if (!(share >= 0 && share <= 1)) {
      throw new IllegalArgumentException("evaluation share must be in [0, 1], got " + share);
    }
    if (k < 1 || k > MAX_K) {
      throw new IllegalArgumentException("evaluation k must be in 1.." + MAX_K + ", got " + k);
    }
    // the request checks the band and the ranking against the measure (the fields are not assigned yet)
    new SuggestionRequest(List.of("x"), horizon, measure, k, minConfidence, maxConfidence, 0, includeBundles, ranking);
  }

  /** What the evaluation asks the suggester for a trial's basket: these settings, no support floor. */
  public SuggestionRequest request(List<String> basket) {
    return new SuggestionRequest(basket, horizon, measure, k, minConfidence, maxConfidence, 0.0, includeBundles, ranking);
  }

  /** The defaults of the table above. */
  public static EvaluationSettings defaults() {
    return new EvaluationSettings(DEFAULT_SHARE, 1, DEFAULT_K, SuggestionRequest.DEFAULT_HORIZON, Measure.SHRUNK_LIFT,
        0.0, 1.0, true, DEFAULT_RANKING);
  }

  public EvaluationSettings withShare(double value) {
    return new EvaluationSettings(value, seed, k, horizon, measure, minConfidence, maxConfidence, includeBundles, ranking);
  }

  public EvaluationSettings withSeed(long value) {
    return new EvaluationSettings(share, value, k, horizon, measure, minConfidence, maxConfidence, includeBundles, ranking);
  }

  public EvaluationSettings withK(int value) {
    return new EvaluationSettings(share, seed, value, horizon, measure, minConfidence, maxConfidence, includeBundles, ranking);
  }

  public EvaluationSettings withHorizon(String value) {
    return new EvaluationSettings(share, seed, k, value, measure, minConfidence, maxConfidence, includeBundles, ranking);
  }

  public EvaluationSettings withMeasure(Measure value) {
    return new EvaluationSettings(share, seed, k, horizon, value, minConfidence, maxConfidence, includeBundles, ranking);
  }

  public EvaluationSettings withConfidenceBand(double min, double max) {
    return new EvaluationSettings(share, seed, k, horizon, measure, min, max, includeBundles, ranking);
  }

  public EvaluationSettings withIncludeBundles(boolean value) {
    return new EvaluationSettings(share, seed, k, horizon, measure, minConfidence, maxConfidence, value, ranking);
  }

  public EvaluationSettings withRanking(SuggestionRanking value) {
    return new EvaluationSettings(share, seed, k, horizon, measure, minConfidence, maxConfidence, includeBundles, value);
  }

  /** The cut-offs hit rates are reported at: 1, 5 and k (those not above k, distinct, ascending). */
  public int[] cutoffs() {
    return java.util.stream.IntStream.of(1, 5, k).filter(c -> c <= k).distinct().sorted().toArray();
  }
}
