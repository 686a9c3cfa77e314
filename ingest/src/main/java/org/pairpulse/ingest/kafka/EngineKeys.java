package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.LambdaValidator;
import org.apache.kafka.common.config.ConfigDef.Range;
import org.apache.kafka.common.config.ConfigDef.Type;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairRanking;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.SizeClasses;

/**
 * The engine's keys ({@code engine.*}: ε/δ, capacities, models) and the default horizons' keys ({@code horizon.*}),
 * defined with Kafka's {@link ConfigDef} like {@link IngestConfig}'s. They live here, beside the code that runs the
 * engine, because sketch stays free of Kafka; {@code pairpulse run} and the backtest settings file both read them
 * through {@link #apply}, so a value means the same and is checked the same in both.
 *
 * <p>Defaults are those of {@link EngineConfig#defaults()} and {@link HorizonSpec#defaults()}. A horizon key applies
 * to the engine's horizon of that name ({@code horizon.<name>.half.life.ms} to a decay, {@code .length.ms} and
 * {@code .panes} to a window); the rules between keys (a window's length a multiple of its panes, ...) are
 * {@link EngineConfig}'s and {@link HorizonSpec}'s, checked when the engine configuration is built.
 *
 * <p>{@link #RENAMED} maps the keys' earlier spellings ({@code engine.pairEpsilon}, ...) to these; readers accept
 * them with a deprecation warning.
 */
public final class EngineKeys {
  public static final String ITEM_EPSILON = "engine.item.epsilon";
  public static final String ITEM_DELTA = "engine.item.delta";
  public static final String PAIR_EPSILON = "engine.pair.epsilon";
  public static final String PAIR_DELTA = "engine.pair.delta";
  public static final String DECAY_PAIR_EPSILON = "engine.decay.pair.epsilon";
  public static final String TRACKED_PAIR_CAPACITY = "engine.tracked.pair.capacity";
  public static final String TRACKED_ITEM_CAPACITY = "engine.tracked.item.capacity";
  public static final String MAX_PAIRS_PER_BASKET = "engine.max.pairs.per.basket";
  public static final String TRACKING_HALF_LIFE_MS = "engine.tracking.half.life.ms";
  public static final String SEED = "engine.seed";
  /** Basket-size classes of the size-adjusted null model ({@link SizeClasses#parse}). */
  public static final String SIZE_CLASSES = "engine.size.classes";
  /** How pair occurrences rank for tracking ({@link PairRanking#parse}). */
  public static final String PAIR_RANKING = "engine.pair.ranking";
  public static final String RECENT_HALF_LIFE_MS = "horizon.recent.half.life.ms";
  public static final String DAY_LENGTH_MS = "horizon.day.length.ms";
  public static final String DAY_PANES = "horizon.day.panes";
  public static final String BASELINE_LENGTH_MS = "horizon.baseline.length.ms";
  public static final String BASELINE_PANES = "horizon.baseline.panes";

  private static final String HALF_LIFE_MS = ".half.life.ms";
  private static final String LENGTH_MS = ".length.ms";
  private static final String PANES = ".panes";

  /** Earlier spellings of these keys, each to its key. */
  public static final Map<String, String> RENAMED = Map.ofEntries(
      Map.entry("engine.itemEpsilon", ITEM_EPSILON), Map.entry("engine.itemDelta", ITEM_DELTA),
      Map.entry("engine.pairEpsilon", PAIR_EPSILON), Map.entry("engine.pairDelta", PAIR_DELTA),
      Map.entry("engine.decayPairEpsilon", DECAY_PAIR_EPSILON),
      Map.entry("engine.trackedPairCapacity", TRACKED_PAIR_CAPACITY),
      Map.entry("engine.trackedItemCapacity", TRACKED_ITEM_CAPACITY),
      Map.entry("engine.maxPairsPerBasket", MAX_PAIRS_PER_BASKET),
      Map.entry("engine.trackingHalfLifeMillis", TRACKING_HALF_LIFE_MS), Map.entry("engine.sizeClasses", SIZE_CLASSES),
      Map.entry("engine.pairRanking", PAIR_RANKING), Map.entry("horizon.recent.halfLifeMillis", RECENT_HALF_LIFE_MS),
      Map.entry("horizon.day.lengthMillis", DAY_LENGTH_MS),
      Map.entry("horizon.baseline.lengthMillis", BASELINE_LENGTH_MS));

  /** A double in the open interval (0, 1); NaN is not. */
  private static final ConfigDef.Validator OPEN_UNIT = LambdaValidator.with((name, value) -> {
    double v = ((Number) value).doubleValue();
    if (!(v > 0 && v < 1)) {
      throw new ConfigException(name, value, "out of range");
    }
  }, () -> "(0, 1)");

  public static final ConfigDef DEFINITION = definition(EngineConfig.defaults());

  private EngineKeys() {}

  private static ConfigDef definition(EngineConfig d) {
    HorizonSpec recent = HorizonSpec.RECENT;
    HorizonSpec day = HorizonSpec.DAY;
    HorizonSpec baseline = HorizonSpec.BASELINE;
    return new ConfigDef()
        .define(ITEM_EPSILON, Type.DOUBLE, d.itemEpsilon(), OPEN_UNIT, Importance.HIGH,
            "ε of the item count-min sketches: an item count overcounts by at most ε·W (W: item occurrences in the"
                + " horizon)")
        .define(ITEM_DELTA, Type.DOUBLE, d.itemDelta(), OPEN_UNIT, Importance.MEDIUM,
            "δ of the item sketches: the ε bound fails with probability at most δ (depth ⌈ln 1/δ⌉)")
        .define(PAIR_EPSILON, Type.DOUBLE, d.pairEpsilon(), OPEN_UNIT, Importance.HIGH,
            "ε of the pair sketches of every window pane: memory grows as 1/ε per pane (width ⌈e/ε⌉, rounded up to a"
                + " power of two)")
        .define(PAIR_DELTA, Type.DOUBLE, d.pairDelta(), OPEN_UNIT, Importance.MEDIUM, "δ of the pair sketches")
        .define(DECAY_PAIR_EPSILON, Type.DOUBLE, d.decayPairEpsilon(), OPEN_UNIT, Importance.MEDIUM,
            "ε of the pair sketch of a decay horizon (one sketch: it decides which pairs enter the tracked table)")
        .define(TRACKED_PAIR_CAPACITY, Type.INT, d.trackedPairCapacity(), Range.between(2, EngineConfig.MAX_CAPACITY),
            Importance.HIGH, "pairs for which statistics are kept (every pair in more than W/capacity of the pair"
                + " occurrences is tracked)")
        .define(TRACKED_ITEM_CAPACITY, Type.INT, d.trackedItemCapacity(), Range.between(2, EngineConfig.MAX_CAPACITY),
            Importance.MEDIUM, "items counted exactly once tracked")
        .define(MAX_PAIRS_PER_BASKET, Type.INT, d.maxPairsPerBasket(), Range.between(1, 1 << 20), Importance.MEDIUM,
            "pairs counted per basket; above it pairs are sampled with inverse-probability weights (unbiased)")
        .define(TRACKING_HALF_LIFE_MS, Type.LONG, d.trackingHalfLifeMillis(), Range.atLeast(1000), Importance.LOW,
            "half-life of the weights that rank tracked pairs and items (7 days)")
        .define(SEED, Type.LONG, d.seed(), Importance.LOW,
            "hash seed; every instance of a group must use the same (their states are merged)")
        .define(SIZE_CLASSES, Type.STRING, d.sizeClasses().toString(), parsed(SizeClasses::parse,
            "sizes from 1, e.g. 1,2,3,4-5,6-9,10+", "not size classes (e.g. 1,2,3,4-5,6+)"), Importance.LOW,
            "basket-size classes of the size-adjusted null model (expected pair counts within classes); 1+ is one"
                + " class: the textbook measures throughout. Every instance of a group must use the same")
        .define(PAIR_RANKING, Type.STRING, d.pairRanking().wireName(), parsed(PairRanking::parse, "fractional, count",
            "not fractional or count"), Importance.LOW,
            "how a pair occurrence weighs in the rank that decides which pairs are tracked: fractional (1/(k − 1) in a"
                + " basket of k items, so large baskets do not crowd the table) or count (by frequency). Counts are the"
                + " same either way. Every instance of a group must use the same")
        .define(RECENT_HALF_LIFE_MS, Type.LONG, recent.halfLifeMillis(), Range.atLeast(1000), Importance.HIGH,
            "half-life of the recent decay horizon (6 h); drift compares recent against baseline")
        .define(DAY_LENGTH_MS, Type.LONG, day.lengthMillis(), Range.atLeast(1000), Importance.MEDIUM,
            "length of the day window (24 h); a multiple of " + DAY_PANES)
        .define(DAY_PANES, Type.INT, day.paneCount(), Range.between(1, HorizonSpec.MAX_PANES), Importance.MEDIUM,
            "panes of the day window: its time resolution is length / panes")
        .define(BASELINE_LENGTH_MS, Type.LONG, baseline.lengthMillis(), Range.atLeast(1000), Importance.MEDIUM,
            "length of the baseline window (28 days); the cohort floor's evidence horizon when it is the longest window")
        .define(BASELINE_PANES, Type.INT, baseline.paneCount(), Range.between(1, HorizonSpec.MAX_PANES),
            Importance.MEDIUM, "panes of the baseline window");
  }

  /** A text that {@code parser} accepts. */
  private static ConfigDef.Validator parsed(java.util.function.Function<String, ?> parser, String rule, String problem) {
    return LambdaValidator.with((name, value) -> {
      try {
        parser.apply((String) value);
      } catch (IllegalArgumentException e) {
        throw new ConfigException(name, value, problem);
      }
    }, () -> rule);
  }

  /**
   * {@code base} with the keys of {@code given} applied (key to text or parsed value; keys of other parts are
   * ignored): each value is parsed and range-checked by {@link #DEFINITION}, then set.
   *
   * @throws ConfigException for a bad value, naming the key
   * @throws IllegalArgumentException when the result breaks a rule between keys, or a horizon key names a horizon
   *     {@code base} does not have
   */
  public static EngineConfig apply(EngineConfig base, Map<String, ?> given) {
    Map<String, Object> ours = new LinkedHashMap<>(given);
    ours.keySet().retainAll(DEFINITION.names());
    Map<String, Object> values = DEFINITION.parse(ours);
    values.keySet().retainAll(ours.keySet());
    EngineConfig.Builder engine = base.toBuilder();
    if (values.containsKey(ITEM_EPSILON) || values.containsKey(ITEM_DELTA)) {
      engine.itemError(real(values, ITEM_EPSILON, base.itemEpsilon()), real(values, ITEM_DELTA, base.itemDelta()));
    }
    if (values.containsKey(PAIR_EPSILON) || values.containsKey(PAIR_DELTA)) {
      engine.pairError(real(values, PAIR_EPSILON, base.pairEpsilon()), real(values, PAIR_DELTA, base.pairDelta()));
    }
    if (values.containsKey(DECAY_PAIR_EPSILON)) {
      engine.decayPairEpsilon((Double) values.get(DECAY_PAIR_EPSILON));
    }
    if (values.containsKey(TRACKED_PAIR_CAPACITY)) {
      engine.trackedPairCapacity((Integer) values.get(TRACKED_PAIR_CAPACITY));
    }
    if (values.containsKey(TRACKED_ITEM_CAPACITY)) {
      engine.trackedItemCapacity((Integer) values.get(TRACKED_ITEM_CAPACITY));
    }
    if (values.containsKey(MAX_PAIRS_PER_BASKET)) {
      engine.maxPairsPerBasket((Integer) values.get(MAX_PAIRS_PER_BASKET));
    }
    if (values.containsKey(TRACKING_HALF_LIFE_MS)) {
      engine.trackingHalfLifeMillis((Long) values.get(TRACKING_HALF_LIFE_MS));
    }
    if (values.containsKey(SEED)) {
      engine.seed((Long) values.get(SEED));
    }
    if (values.containsKey(SIZE_CLASSES)) {
      engine.sizeClasses(SizeClasses.parse((String) values.get(SIZE_CLASSES)));
    }
    if (values.containsKey(PAIR_RANKING)) {
      engine.pairRanking(PairRanking.parse((String) values.get(PAIR_RANKING)));
    }
    engine.horizons(horizons(values, base.horizons()));
    return engine.build();
  }

  private static double real(Map<String, Object> values, String key, double fallback) {
    return values.containsKey(key) ? (Double) values.get(key) : fallback;
  }

  /** The horizons with the horizon keys applied by name. */
  private static List<HorizonSpec> horizons(Map<String, Object> values, List<HorizonSpec> current) {
    for (String key : values.keySet()) {
      if (key.startsWith("horizon.")) {
        String name = key.substring("horizon.".length(), key.indexOf('.', "horizon.".length()));
        if (current.stream().noneMatch(h -> h.name().equals(name))) {
          throw new IllegalArgumentException(key + ": the engine has no horizon '" + name + "'");
        }
      }
    }
    List<HorizonSpec> out = new ArrayList<>(current.size());
    for (HorizonSpec h : current) {
      String prefix = "horizon." + h.name();
      if (h.isWindow()) {
        long lengthMillis = (Long) values.getOrDefault(prefix + LENGTH_MS, h.lengthMillis());
        int panes = (Integer) values.getOrDefault(prefix + PANES, h.paneCount());
        out.add(lengthMillis == h.lengthMillis() && panes == h.paneCount() ? h
            : new HorizonSpec(h.name(), h.kind(), lengthMillis, panes, 0));
      } else {
        long halfLifeMillis = (Long) values.getOrDefault(prefix + HALF_LIFE_MS, h.halfLifeMillis());
        out.add(halfLifeMillis == h.halfLifeMillis() ? h : HorizonSpec.decay(h.name(), Duration.ofMillis(halfLifeMillis)));
      }
    }
    return out;
  }
}
