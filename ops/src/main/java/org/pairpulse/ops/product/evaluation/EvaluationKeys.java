package org.pairpulse.ops.product.evaluation;

import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.Map;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.LambdaValidator;
import org.apache.kafka.common.config.ConfigDef.Range;
import org.apache.kafka.common.config.ConfigDef.Type;
import org.apache.kafka.common.config.ConfigDef.ValidString;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Measure;

/**
 * The evaluation's keys ({@code evaluation.*}), defined with Kafka's {@link ConfigDef}: {@link #LIVE} are those
 * {@code pairpulse run}'s live evaluation reads, {@link #OFFLINE} adds those only a backtest reads. Both read them
 * through {@link #apply}, over their own base settings (the defaults shown are {@code pairpulse run}'s; a backtest's
 * share is {@link EvaluationSettings#DEFAULT_SHARE} unless set).
 */
public final class EvaluationKeys {
  public static final String SHARE = "evaluation.share";
  public static final String K = "evaluation.k";
  public static final String HORIZON = "evaluation.horizon";
  public static final String SEED = "evaluation.seed";
  public static final String MEASURE = "evaluation.measure";
  public static final String MIN_CONFIDENCE = "evaluation.min.confidence";
  public static final String MAX_CONFIDENCE = "evaluation.max.confidence";
  public static final String INCLUDE_BUNDLES = "evaluation.include.bundles";
  public static final String RANKING = "evaluation.ranking";

  /** The live evaluation's share of baskets in {@code pairpulse run}. */
  public static final double LIVE_SHARE = 0.05;

  /** Earlier spellings, each to its key. */
  public static final Map<String, String> RENAMED = Map.of("evaluation.minConfidence", MIN_CONFIDENCE,
      "evaluation.maxConfidence", MAX_CONFIDENCE, "evaluation.includeBundles", INCLUDE_BUNDLES);

  /** A double in [0, 1]; NaN is not. */
  private static final ConfigDef.Validator UNIT = LambdaValidator.with((name, value) -> {
    double v = ((Number) value).doubleValue();
    if (!(v >= 0 && v <= 1)) {
      throw new ConfigException(name, value, "out of range");
    }
  }, () -> "[0, 1]");

  /** The keys {@code pairpulse run} reads. */
  public static final ConfigDef LIVE = new ConfigDef()
      .define(SHARE, Type.DOUBLE, LIVE_SHARE, UNIT, Importance.MEDIUM,
          "share of baskets the live evaluation tests before ingest counts them (one item hidden; hit rate against a"
              + " table rebuilt once a day and the most popular items, on the dashboard and in /metrics); 0: none. In"
              + " group mode only the alert leader evaluates, from its own ingest")
      .define(K, Type.INT, EvaluationSettings.DEFAULT_K, Range.between(1, EvaluationSettings.MAX_K), Importance.LOW,
          "suggestions asked for per tested basket: the k of hit rate at k")
      .define(HORIZON, Type.STRING, HorizonSpec.RECENT.name(),
          ValidString.in(HorizonSpec.RECENT.name(), HorizonSpec.DAY.name(), HorizonSpec.BASELINE.name()),
          Importance.LOW, "the horizon the evaluation's suggestions use");

  /** {@link #LIVE} and the keys only a backtest reads. */
  public static final ConfigDef OFFLINE = new ConfigDef(LIVE)
      .define(SEED, Type.LONG, EvaluationSettings.defaults().seed(), Importance.LOW,
          "seed of the basket sampling and of the hidden-item choice")
      .define(MEASURE, Type.STRING, Measure.SHRUNK_LIFT.wireName(),
          ValidString.in(Arrays.stream(Measure.values()).map(Measure::wireName).toArray(String[]::new)), Importance.LOW,
          "the suggester's scoring measure")
      .define(MIN_CONFIDENCE, Type.DOUBLE, 0.0, UNIT, Importance.LOW,
          "lower end of the suggester's confidence band (off by default: the evaluation asks how well the table"
              + " predicts the hidden item)")
      .define(MAX_CONFIDENCE, Type.DOUBLE, 1.0, UNIT, Importance.LOW, "upper end of the suggester's confidence band")
      .define(INCLUDE_BUNDLES, Type.BOOLEAN, true, Importance.LOW, "whether bundle pairs may predict")
      .define(RANKING, Type.STRING, EvaluationSettings.DEFAULT_RANKING.wireName(),
          ValidString.in(Arrays.stream(SuggestionRanking.values()).map(SuggestionRanking::wireName)
              .toArray(String[]::new)), Importance.LOW, "how the suggester orders candidates");

  private EvaluationKeys() {}

  /**
   * {@code base} with the keys of {@code given} that {@code definition} defines applied (others are ignored), each
   * parsed and checked by it.
   *
   * @throws ConfigException for a bad value, naming the key
   */
  public static EvaluationSettings apply(EvaluationSettings base, ConfigDef definition, Map<String, ?> given) {
    Map<String, Object> ours = new LinkedHashMap<>(given);
    ours.keySet().retainAll(definition.names());
    Map<String, Object> v = definition.parse(ours);
    v.keySet().retainAll(ours.keySet());
    EvaluationSettings out = base;
    if (v.containsKey(SHARE)) {
      out = out.withShare((Double) v.get(SHARE));
    }
    if (v.containsKey(K)) {
      out = out.withK((Integer) v.get(K));
    }
    if (v.containsKey(HORIZON)) {
      out = out.withHorizon((String) v.get(HORIZON));
    }
    if (v.containsKey(SEED)) {
      out = out.withSeed((Long) v.get(SEED));
    }
    if (v.containsKey(MEASURE)) {
      out = out.withMeasure(Measure.fromWireName((String) v.get(MEASURE)));
    }
    if (v.containsKey(MIN_CONFIDENCE) || v.containsKey(MAX_CONFIDENCE)) {
      out = out.withConfidenceBand((Double) v.getOrDefault(MIN_CONFIDENCE, out.minConfidence()),
          (Double) v.getOrDefault(MAX_CONFIDENCE, out.maxConfidence()));
    }
    if (v.containsKey(INCLUDE_BUNDLES)) {
      out = out.withIncludeBundles((Boolean) v.get(INCLUDE_BUNDLES));
    }
    if (v.containsKey(RANKING)) {
      out = out.withRanking(SuggestionRanking.fromWireName((String) v.get(RANKING)));
    }
    return out;
  }
}
