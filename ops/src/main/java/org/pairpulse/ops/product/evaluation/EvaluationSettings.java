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
 * @param ask what a trial asks the suggester (its basket is replaced by the trial's; its count is k, 1..100): the
 *     horizon, the scoring measure, the confidence band, whether bundle pairs may produce suggestions, and how the
 *     suggester orders candidates ({@code association} or {@code posterior}); no support floor
 */
public record EvaluationSettings(double share, long seed, SuggestionRequest ask) {

  public static final double DEFAULT_SHARE = 0.10;
  public static final int DEFAULT_K = 10;
  public static final int MAX_K = 100;
  /** The evaluation's default ranking (see README-ops-analysis for the measurement behind it). */
  public static final SuggestionRanking DEFAULT_RANKING = SuggestionRanking.POSTERIOR;

  public EvaluationSettings {
    Objects.requireNonNull(ask, "ask");
    if (!(share >= 0 && share <= 1)) {
      throw new IllegalArgumentException("evaluation share must be in [0, 1], got " + share);
    }
    if (ask.count() < 1 || ask.count() > MAX_K) {
      throw new IllegalArgumentException("evaluation k must be in 1.." + MAX_K + ", got " + ask.count());
    }
    if (ask.minSupport() != 0) {
      throw new IllegalArgumentException("the evaluation asks without a support floor, got " + ask.minSupport());
    }
  }

  /** What the evaluation asks the suggester for a trial's basket: these settings, no support floor. */
  public SuggestionRequest request(List<String> basket) {
    return ask.withBasket(basket);
  }

  /** The defaults of the table above. */
  public static EvaluationSettings defaults() {
    return new EvaluationSettings(DEFAULT_SHARE, 1, new SuggestionRequest(List.of("trial"),
        SuggestionRequest.DEFAULT_HORIZON, Measure.SHRUNK_LIFT, DEFAULT_K, 0.0, 1.0, 0.0, true, DEFAULT_RANKING));
  }

  /** Suggestions asked for per trial. */
  public int k() {
    return ask.count();
  }

  public String horizon() {
    return ask.horizon();
  }

  public Measure measure() {
    return ask.measure();
  }

  public double minConfidence() {
    return ask.minConfidence();
  }

  public double maxConfidence() {
    return ask.maxConfidence();
  }

  public boolean includeBundles() {
    return ask.includeBundles();
  }

  public SuggestionRanking ranking() {
    return ask.ranking();
  }

  public EvaluationSettings withShare(double value) {
    return new EvaluationSettings(value, seed, ask);
  }

  public EvaluationSettings withSeed(long value) {
    return new EvaluationSettings(share, value, ask);
  }

  public EvaluationSettings withK(int value) {
    return new EvaluationSettings(share, seed, ask.withCount(value));
  }

  public EvaluationSettings withHorizon(String value) {
    return new EvaluationSettings(share, seed, ask.withHorizon(value));
  }

  public EvaluationSettings withMeasure(Measure value) {
    return new EvaluationSettings(share, seed, ask.withMeasure(value));
  }

  public EvaluationSettings withConfidenceBand(double min, double max) {
    return new EvaluationSettings(share, seed, ask.withConfidenceBand(min, max));
  }

  public EvaluationSettings withIncludeBundles(boolean value) {
    return new EvaluationSettings(share, seed, ask.withIncludeBundles(value));
  }

  public EvaluationSettings withRanking(SuggestionRanking value) {
    return new EvaluationSettings(share, seed, ask.withRanking(value));
  }

  /** The cut-offs hit rates are reported at: 1, 5 and k (those not above k, distinct, ascending). */
  public int[] cutoffs() {
    return java.util.stream.IntStream.of(1, 5, k()).filter(c -> c <= k()).distinct().sorted().toArray();
  }
}
