package org.pairpulse.serve.suggest;

import java.util.List;
import java.util.Objects;
import java.util.TreeSet;
import org.pairpulse.sketch.stats.Measure;

/**
 * What to suggest for: a basket and the options of {@link Suggester#suggest}.
 *
 * <p>The basket is normalised on construction to its distinct items in sorted order, so two
 * requests for the same set of items are equal (and share a cache entry).
 *
 * @param basket the basket's items (one or more; duplicates and order do not matter)
 * @param horizon the horizon whose statistics are used; default {@value #DEFAULT_HORIZON}
 * @param measure the measure that scores candidates; default {@code shrunk_lift}
 * @param count how many suggestions to return, at least 1; default {@value #DEFAULT_COUNT}
 * @param minConfidence lower end of the confidence band, in [0, 1]; default {@value #DEFAULT_MIN_CONFIDENCE}
 * @param maxConfidence upper end of the confidence band, in [minConfidence, 1]; default {@value #DEFAULT_MAX_CONFIDENCE}
 * @param minSupport the support floor, in [0, 1]; default 0
 * @param includeBundles whether bundle pairs may produce suggestions; default false
 * @param ranking how eligible candidates are ordered; default {@link #DEFAULT_RANKING}. {@code posterior} needs a
 *     lift measure ({@code lift}, {@code shrunk_lift}, {@code lift_lower}): its per-pair terms estimate
 *     P(x | c) / P(x)
 */
public record SuggestionRequest(List<String> basket, String horizon, Measure measure, int count,
    double minConfidence, double maxConfidence, double minSupport, boolean includeBundles,
    SuggestionRanking ranking) {

  public static final String DEFAULT_HORIZON = "recent";
  public static final int DEFAULT_COUNT = 10;
  /**
   * The default confidence band 0.30–0.60: a common-practice rule of thumb, not a derived value. What it
   * trades off (uptake against surprise) and how to tune it: serve's README, "The confidence band".
   */
  public static final double DEFAULT_MIN_CONFIDENCE = 0.30;
  public static final double DEFAULT_MAX_CONFIDENCE = 0.60;
  /** The default ranking (see README-serve for the measurement behind the choice). */
  public static final SuggestionRanking DEFAULT_RANKING = SuggestionRanking.ASSOCIATION;

  /** A request with the default ranking. */
  public SuggestionRequest(List<String> basket, String horizon, Measure measure, int count, double minConfidence,
      double maxConfidence, double minSupport, boolean includeBundles) {
    this(basket, horizon, measure, count, minConfidence, maxConfidence, minSupport, includeBundles, DEFAULT_RANKING);
  }

  /** @throws IllegalArgumentException when an option is outside its range (see the record doc) */
  public SuggestionRequest {
    Objects.requireNonNull(basket, "basket");
    Objects.requireNonNull(horizon, "horizon");
    Objects.requireNonNull(measure, "measure");
    Objects.requireNonNull(ranking, "ranking");
    if (ranking == SuggestionRanking.POSTERIOR && !isLiftMeasure(measure)) {
      throw new IllegalArgumentException("ranking 'posterior' needs a lift measure (lift, shrunk_lift, lift_lower), got '"
          + measure.wireName() + "'");
    }
    TreeSet<String> distinct = new TreeSet<>();
    for (String item : basket) {
      if (item == null || item.isEmpty()) {
        throw new IllegalArgumentException("basket items must be non-empty strings");
      }
      distinct.add(item);
    }
    if (distinct.isEmpty()) {
      throw new IllegalArgumentException("the basket needs at least one item");
    }
    basket = List.copyOf(distinct);
    if (count < 1) {
      throw new IllegalArgumentException("count must be >= 1, got " + count);
    }
    if (!(minConfidence >= 0 && minConfidence <= 1)) {
      throw new IllegalArgumentException("minConfidence must be in [0, 1], got " + minConfidence);
    }
    if (!(maxConfidence >= minConfidence && maxConfidence <= 1)) {
      throw new IllegalArgumentException(
          "maxConfidence must be in [minConfidence, 1] = [" + minConfidence + ", 1], got " + maxConfidence);
    }
    if (!(minSupport >= 0 && minSupport <= 1)) {
      throw new IllegalArgumentException("minSupport must be in [0, 1], got " + minSupport);
    }
  }

  /** Whether {@code measure} estimates P(x | c) / P(x), the per-pair factor of the naive-Bayes posterior. */
  public static boolean isLiftMeasure(Measure measure) {
    Measure textbook = measure.unadjusted();
    return textbook == Measure.LIFT_UNADJUSTED || textbook == Measure.SHRUNK_LIFT_UNADJUSTED
        || textbook == Measure.LIFT_LOWER_UNADJUSTED;
  }

  /** A request with every default for these items. */
  public static SuggestionRequest of(String... items) {
    return of(List.of(items));
  }

  /** A request with every default for these items. */
  public static SuggestionRequest of(List<String> items) {
    return new SuggestionRequest(items, DEFAULT_HORIZON, Measure.SHRUNK_LIFT, DEFAULT_COUNT,
        DEFAULT_MIN_CONFIDENCE, DEFAULT_MAX_CONFIDENCE, 0.0, false, DEFAULT_RANKING);
  }

  /** The same request for another basket. */
  public SuggestionRequest withBasket(List<String> value) {
    return new SuggestionRequest(value, horizon, measure, count, minConfidence, maxConfidence, minSupport, includeBundles, ranking);
  }

  public SuggestionRequest withHorizon(String value) {
    return new SuggestionRequest(basket, value, measure, count, minConfidence, maxConfidence, minSupport, includeBundles, ranking);
  }

  public SuggestionRequest withMeasure(Measure value) {
    return new SuggestionRequest(basket, horizon, value, count, minConfidence, maxConfidence, minSupport, includeBundles, ranking);
  }

  public SuggestionRequest withCount(int value) {
    return new SuggestionRequest(basket, horizon, measure, value, minConfidence, maxConfidence, minSupport, includeBundles, ranking);
  }

  /** The confidence band [min, max]; (0, 1) switches it off. */
  public SuggestionRequest withConfidenceBand(double min, double max) {
    return new SuggestionRequest(basket, horizon, measure, count, min, max, minSupport, includeBundles, ranking);
  }

  public SuggestionRequest withMinSupport(double value) {
    return new SuggestionRequest(basket, horizon, measure, count, minConfidence, maxConfidence, value, includeBundles, ranking);
  }

  public SuggestionRequest withIncludeBundles(boolean value) {
    return new SuggestionRequest(basket, horizon, measure, count, minConfidence, maxConfidence, minSupport, value, ranking);
  }

  public SuggestionRequest withRanking(SuggestionRanking value) {
    return new SuggestionRequest(basket, horizon, measure, count, minConfidence, maxConfidence, minSupport, includeBundles,
        value);
  }
}
