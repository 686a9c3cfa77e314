package org.pairpulse.ops.backtest;

import java.io.IOException;
import java.io.Reader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import java.util.function.Consumer;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ops.evaluation.EvaluationSettings;
import org.pairpulse.ops.run.RunConfig;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.SizeClasses;

/**
 * Reads backtest settings from a Java properties file ({@code --config}). It shares the key names of the other
 * modules, so one file can serve a production run and its backtest:
 * <ul>
 *   <li>serve's keys: {@code drift.*} (thresholds, dwell, cooldown) and {@code serve.cohortFloor}; other
 *       {@code serve.*} and {@code alerts.*} keys are accepted and ignored;</li>
 *   <li>ingest's keys: {@code allowed.lateness.ms}, {@code dedupe.horizon.ms}, {@code dedupe.max.ids},
 *       {@code line.gap.ms}, {@code line.max.age.ms}, {@code line.max.open.baskets}, {@code max.basket.items},
 *       {@code max.id.chars}, {@code max.future.ms}, {@code max.past.ms} (the last two are off in a backtest unless
 *       set); Kafka and checkpoint keys are accepted and ignored;</li>
 *   <li>engine keys: {@code engine.trackedPairCapacity}, {@code engine.trackedItemCapacity},
 *       {@code engine.pairEpsilon}, {@code engine.pairDelta}, {@code engine.itemEpsilon}, {@code engine.itemDelta},
 *       {@code engine.decayPairEpsilon}, {@code engine.maxPairsPerBasket}, {@code engine.trackingHalfLifeMillis},
 *       {@code engine.seed}, {@code engine.sizeClasses} (basket-size classes of the size-adjusted measures, e.g.
 *       {@code 1,2,3,4-5,6+}; {@code 1+} for the textbook measures), {@code engine.pairRanking} ({@code fractional} or
 *       {@code count}), and the run configuration's horizon keys {@code horizon.recent.halfLifeMillis},
 *       {@code horizon.day.lengthMillis}, {@code horizon.day.panes}, {@code horizon.baseline.lengthMillis},
 *       {@code horizon.baseline.panes} (applied to the engine's horizons of those names, as {@link RunConfig} does);</li>
 *   <li>backtest keys: {@code backtest.refreshEveryMillis}, {@code backtest.summaryEveryMillis},
 *       {@code backtest.summaryTop}, {@code evaluation.share}, {@code evaluation.seed}, {@code evaluation.k},
 *       {@code evaluation.horizon}, {@code evaluation.measure}, {@code evaluation.minConfidence},
 *       {@code evaluation.maxConfidence}, {@code evaluation.includeBundles}, {@code evaluation.ranking} (see
 *       {@link BacktestSettings} and {@link EvaluationSettings});</li>
 *   <li>keys only a running pipeline uses ({@link RunConfig}'s run part, such as
 *       {@code run.sketchHealthIntervalMillis}): ignored, each with a note, so that the file of
 *       {@code pairpulse run --config} serves a backtest as it is.</li>
 * </ul>
 * Any other key is an error that names it. Command-line options override the file.
 */
public final class SettingsFile {
  private static final List<String> ENGINE_KEYS = List.of("engine.trackedPairCapacity", "engine.trackedItemCapacity",
      "engine.pairEpsilon", "engine.pairDelta", "engine.itemEpsilon", "engine.itemDelta", "engine.decayPairEpsilon",
      "engine.maxPairsPerBasket", "engine.trackingHalfLifeMillis", "engine.seed", "engine.sizeClasses",
      "engine.pairRanking");
  private static final List<String> BACKTEST_KEYS = List.of("backtest.refreshEveryMillis", "backtest.summaryEveryMillis",
      "backtest.summaryTop", "evaluation.share", "evaluation.seed", "evaluation.k", "evaluation.horizon",
      "evaluation.measure", "evaluation.minConfidence", "evaluation.maxConfidence", "evaluation.includeBundles",
      "evaluation.ranking");

  /** Keys of the run configuration ({@link RunConfig.Part#RUN}) that only a running pipeline uses. */
  static final List<String> RUN_ONLY_KEYS = RunConfig.definitions().stream()
      .filter(k -> k.part() == RunConfig.Part.RUN).map(RunConfig.Key::name).toList();

  private SettingsFile() {}

  /** The run configuration's horizon keys, applied to the engine's horizons of the same names. */
  static final List<String> HORIZON_KEYS = List.of("horizon.recent.halfLifeMillis", "horizon.day.lengthMillis",
      "horizon.day.panes", "horizon.baseline.lengthMillis", "horizon.baseline.panes");

  /** Reads {@code file} over {@code base}; keys of the run configuration that a backtest does not use are ignored. */
  public static BacktestSettings read(Path file, BacktestSettings base) throws IOException {
    return read(file, base, note -> {});
  }

  /**
   * Reads {@code file} over {@code base}; {@code notes} receives one line per key that is ignored because only
   * {@code pairpulse run} uses it ({@link RunConfig}'s run keys such as {@code run.sketchHealthIntervalMillis}).
   */
  public static BacktestSettings read(Path file, BacktestSettings base, Consumer<String> notes) throws IOException {
    Properties properties = new Properties();
    try (Reader reader = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
      properties.load(reader);
    }
    Map<String, String> values = new TreeMap<>();
    for (String name : properties.stringPropertyNames()) {
      values.put(name, properties.getProperty(name).trim());
    }
    try {
      return apply(values, base, notes);
    } catch (IllegalArgumentException | ConfigException e) {
      throw new IllegalArgumentException(file + ": " + e.getMessage(), e);
    }
  }

  /**
   * A benchmark's {@code --config FILE} option: {@code base} when {@code file} is null, else {@link #read} with each
   * note printed to {@code err} as {@code "<who>: <file>: <note>"}.
   *
   * @throws IllegalArgumentException when the file is missing or holds a bad key or value
   */
  public static BacktestSettings readOption(Path file, BacktestSettings base, java.io.PrintWriter err, String who)
      throws IOException {
    if (file == null) {
      return base;
    }
    if (!Files.isRegularFile(file)) {
      throw new IllegalArgumentException("--config: no such file: " + file);
    }
    return read(file, base, note -> {
      err.println(who + ": " + file + ": " + note);
      err.flush();
    });
  }

  /** Applies {@code values} (key to text) over {@code base}; run-only keys are ignored silently. */
  public static BacktestSettings apply(Map<String, String> values, BacktestSettings base) {
    return apply(values, base, note -> {});
  }

  /** Applies {@code values} (key to text) over {@code base}; {@code notes} hears of each run-only key ignored. */
  public static BacktestSettings apply(Map<String, String> values, BacktestSettings base, Consumer<String> notes) {
    Map<String, String> serve = new LinkedHashMap<>();
    Map<String, Object> ingest = new LinkedHashMap<>();
    for (Map.Entry<String, String> entry : values.entrySet()) {
      String key = entry.getKey();
      if (key.startsWith("drift.") || key.equals(ServeConfig.COHORT_FLOOR)) {
        serve.put(key, entry.getValue());
      } else if (IngestConfig.DEFINITION.names().contains(key)) {
        ingest.put(key, entry.getValue());
      } else if (key.startsWith("serve.") || key.startsWith("alerts.") || key.startsWith(IngestConfig.KAFKA_PREFIX)
          || ENGINE_KEYS.contains(key) || BACKTEST_KEYS.contains(key) || HORIZON_KEYS.contains(key)) {
        continue; // serve's and Kafka's keys are ignored; the others are read below
      } else if (RUN_ONLY_KEYS.contains(key)) {
        notes.accept("ignoring '" + key + "': only 'pairpulse run' uses it");
      } else {
        throw new IllegalArgumentException("unknown setting '" + key + "' (known: drift.*, serve.cohortFloor, ingest's"
            + " front and limit keys, " + String.join(", ", ENGINE_KEYS) + ", " + String.join(", ", HORIZON_KEYS) + ", "
            + String.join(", ", BACKTEST_KEYS) + "; ignored: serve.*, alerts.*, kafka.*, "
            + String.join(", ", RUN_ONLY_KEYS) + ")");
      }
    }
    BacktestSettings settings = base;
    if (!serve.isEmpty()) {
      ServeConfig config = ServeConfig.from(serve);
      settings = settings.withDrift(config.driftSettings());
      if (serve.containsKey(ServeConfig.COHORT_FLOOR)) {
        settings = settings.withCohortFloor(config.doubleValue(ServeConfig.COHORT_FLOOR));
      }
    }
    if (!ingest.isEmpty()) {
      Map<String, Object> props = new LinkedHashMap<>(ingest);
      props.put(IngestConfig.BOOTSTRAP_SERVERS, "unused:9092");
      props.put(IngestConfig.TOPICS, "unused");
      props.put(IngestConfig.CHECKPOINT_STORE, "none");
      IngestConfig config = new IngestConfig(props);
      settings = settings.withFront(config.frontSettings());
      EventLimits limits = config.eventLimits(settings.limits().clock());
      settings = settings.withLimits(new EventLimits(limits.maxBasketItems(), limits.maxIdChars(),
          ingest.containsKey(IngestConfig.MAX_FUTURE_MS) ? limits.maxFutureMillis() : Long.MAX_VALUE,
          ingest.containsKey(IngestConfig.MAX_PAST_MS) ? limits.maxPastMillis() : Long.MAX_VALUE,
          limits.maxAttributes(), limits.clock()));
    }
    EngineConfig.Builder engine = settings.engine().toBuilder();
    EngineConfig current = settings.engine();
    engine.trackedPairCapacity(intOf(values, "engine.trackedPairCapacity", current.trackedPairCapacity()));
    engine.trackedItemCapacity(intOf(values, "engine.trackedItemCapacity", current.trackedItemCapacity()));
    engine.pairError(doubleOf(values, "engine.pairEpsilon", current.pairEpsilon()),
        doubleOf(values, "engine.pairDelta", current.pairDelta()));
    engine.itemError(doubleOf(values, "engine.itemEpsilon", current.itemEpsilon()),
        doubleOf(values, "engine.itemDelta", current.itemDelta()));
    engine.decayPairEpsilon(doubleOf(values, "engine.decayPairEpsilon", current.decayPairEpsilon()));
    engine.maxPairsPerBasket(intOf(values, "engine.maxPairsPerBasket", current.maxPairsPerBasket()));
    engine.trackingHalfLifeMillis(longOf(values, "engine.trackingHalfLifeMillis", current.trackingHalfLifeMillis()));
    engine.seed(longOf(values, "engine.seed", current.seed()));
    if (values.containsKey("engine.pairRanking")) {
      engine.pairRanking(org.pairpulse.sketch.engine.PairRanking.parse(values.get("engine.pairRanking")));
    }
    if (values.containsKey("engine.sizeClasses")) {
      engine.sizeClasses(SizeClasses.parse(values.get("engine.sizeClasses")));
    }
    engine.horizons(horizons(values, current.horizons()));
    settings = settings.withEngine(engine.build());
    settings = settings.withRefreshEveryMillis(longOf(values, "backtest.refreshEveryMillis", settings.refreshEveryMillis()))
        .withSummaryEveryMillis(longOf(values, "backtest.summaryEveryMillis", settings.summaryEveryMillis()))
        .withSummaryTop(intOf(values, "backtest.summaryTop", settings.summaryTop()));
    EvaluationSettings evaluation = settings.evaluation() != null ? settings.evaluation() : EvaluationSettings.defaults();
    evaluation = new EvaluationSettings(doubleOf(values, "evaluation.share", evaluation.share()),
        longOf(values, "evaluation.seed", evaluation.seed()), intOf(values, "evaluation.k", evaluation.k()),
        values.getOrDefault("evaluation.horizon", evaluation.horizon()),
        values.containsKey("evaluation.measure") ? Measure.fromWireName(values.get("evaluation.measure"))
            : evaluation.measure(),
        doubleOf(values, "evaluation.minConfidence", evaluation.minConfidence()),
        doubleOf(values, "evaluation.maxConfidence", evaluation.maxConfidence()),
        values.containsKey("evaluation.includeBundles") ? booleanOf(values, "evaluation.includeBundles")
            : evaluation.includeBundles(),
        values.containsKey("evaluation.ranking") ? SuggestionRanking.fromWireName(values.get("evaluation.ranking"))
            : evaluation.ranking());
    return settings.withEvaluation(evaluation);
  }

  /** The engine's horizons with the run configuration's horizon keys applied (by horizon name, as {@link RunConfig}). */
  private static List<HorizonSpec> horizons(Map<String, String> values, List<HorizonSpec> current) {
    List<HorizonSpec> out = new ArrayList<>(current.size());
    for (String key : HORIZON_KEYS) {
      if (values.containsKey(key)) {
        String name = key.substring("horizon.".length(), key.lastIndexOf('.'));
        if (current.stream().noneMatch(h -> h.name().equals(name))) {
          throw new IllegalArgumentException(key + ": the engine has no horizon '" + name + "'");
        }
      }
    }
    for (HorizonSpec h : current) {
      String prefix = "horizon." + h.name() + ".";
      if (h.isWindow()) {
        long length = longOf(values, prefix + "lengthMillis", h.lengthMillis());
        int panes = intOf(values, prefix + "panes", h.paneCount());
        out.add(new HorizonSpec(h.name(), h.kind(), length, panes, 0));
      } else {
        out.add(HorizonSpec.decay(h.name(), Duration.ofMillis(longOf(values, prefix + "halfLifeMillis",
            h.halfLifeMillis()))));
      }
    }
    return out;
  }

  private static int intOf(Map<String, String> values, String key, int fallback) {
    String text = values.get(key);
    try {
      return text == null ? fallback : Integer.parseInt(text);
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(key + " must be an integer, got '" + text + "'");
    }
  }

  private static long longOf(Map<String, String> values, String key, long fallback) {
    String text = values.get(key);
    try {
      return text == null ? fallback : Long.parseLong(text);
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(key + " must be an integer, got '" + text + "'");
    }
  }

  private static double doubleOf(Map<String, String> values, String key, double fallback) {
    String text = values.get(key);
    try {
      return text == null ? fallback : Double.parseDouble(text);
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(key + " must be a number, got '" + text + "'");
    }
  }

  private static boolean booleanOf(Map<String, String> values, String key) {
    String text = values.get(key);
    if (!text.equals("true") && !text.equals("false")) {
      throw new IllegalArgumentException(key + " must be true or false, got '" + text + "'");
    }
    return Boolean.parseBoolean(text);
  }
}
