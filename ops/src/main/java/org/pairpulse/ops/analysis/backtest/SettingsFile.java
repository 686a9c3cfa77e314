package org.pairpulse.ops.analysis.backtest;

import java.io.IOException;
import java.io.Reader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import java.util.function.Consumer;
import org.apache.kafka.common.config.ConfigDef.ConfigKey;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.kafka.EngineKeys;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ops.product.evaluation.EvaluationKeys;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.run.ConfigParts;
import org.pairpulse.ops.product.run.ConfigParts.Part;
import org.pairpulse.ops.product.run.RunConfig;
import org.pairpulse.ops.product.run.RunKeys;
import org.pairpulse.serve.ServeConfig;

/**
 * Reads backtest settings from a Java properties file ({@code --config}). It composes the same key definitions as
 * {@link RunConfig} ({@link #PARTS}), so one file serves a production run and its backtest, each value checked the
 * same way in both:
 * <ul>
 *   <li>serve's keys ({@link ServeConfig}): {@code drift.*} (thresholds, dwell, cooldown) and
 *       {@code serve.cohort.floor}; other {@code serve.*} and {@code alerts.*} keys are accepted and ignored;</li>
 *   <li>ingest's keys ({@link IngestConfig}): the front and limit keys ({@code allowed.lateness.ms},
 *       {@code dedupe.*}, {@code line.*}, {@code max.*}; {@code max.future.ms} and {@code max.past.ms} are off in a
 *       backtest unless set); Kafka and checkpoint keys are accepted and ignored;</li>
 *   <li>the engine and horizon keys ({@link EngineKeys}: {@code engine.*}, {@code horizon.*}), applied to the base
 *       engine (a horizon key to the engine's horizon of that name);</li>
 *   <li>the evaluation's keys ({@link EvaluationKeys#OFFLINE}) and the backtest's own ({@link BacktestKeys});</li>
 *   <li>keys only a running pipeline uses ({@link RunKeys}, such as {@code run.sketch.health.interval.ms}):
 *       ignored, each with a note, so that the file of {@code pairpulse run --config} serves a backtest as it
 *       is.</li>
 * </ul>
 * Any other key is an error that names it; a key's earlier spelling reads as its key with a deprecation note.
 * Command-line options override the file.
 */
public final class SettingsFile {
  /** The parts a settings file composes: the run configuration's definitions and the backtest's. */
  public static final ConfigParts PARTS = new ConfigParts(List.of(
      new Part("ingest", IngestConfig.DEFINITION, Map.of()),
      new Part("engine", EngineKeys.DEFINITION, EngineKeys.RENAMED),
      new Part("serve", ServeConfig.DEFINITION, ServeConfig.RENAMED),
      new Part("run", RunKeys.DEFINITION, RunKeys.RENAMED),
      new Part("evaluation", EvaluationKeys.OFFLINE, EvaluationKeys.RENAMED),
      new Part("backtest", BacktestKeys.DEFINITION, BacktestKeys.RENAMED)));

  /** Keys of the run configuration that only a running pipeline uses. */
  static final List<String> RUN_ONLY_KEYS = List.copyOf(RunKeys.DEFINITION.names());

  private SettingsFile() {}

  /** Reads {@code file} over {@code base}; keys of the run configuration that a backtest does not use are ignored. */
  public static BacktestSettings read(Path file, BacktestSettings base) throws IOException {
    return read(file, base, note -> {});
  }

  /**
   * Reads {@code file} over {@code base}; {@code notes} receives one line per key that is ignored because only
   * {@code pairpulse run} uses it ({@link RunKeys} such as {@code run.sketch.health.interval.ms}; and of each earlier key spelling read).
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

  /**
   * Applies {@code values} (key to text) over {@code base}; {@code notes} hears of each run-only key ignored and of
   * each earlier key spelling read.
   *
   * @throws IllegalArgumentException naming an unknown key or a bad value
   */
  public static BacktestSettings apply(Map<String, String> values, BacktestSettings base, Consumer<String> notes) {
    List<String> problems = new ArrayList<>();
    Map<String, String> given = PARTS.rename(new TreeMap<>(values), notes, problems::add);
    Map<String, String> serve = new LinkedHashMap<>();
    Map<String, Object> ingest = new LinkedHashMap<>();
    Map<String, String> used = new LinkedHashMap<>();
    for (Map.Entry<String, String> entry : given.entrySet()) {
      String key = entry.getKey();
      ConfigKey definition = PARTS.key(key);
      if (key.startsWith(IngestConfig.KAFKA_PREFIX)) {
        continue; // Kafka's keys are ignored
      } else if (definition == null) {
        problems.add("unknown setting '" + key + "' (did you mean '" + PARTS.closest(key) + "'? Every key:"
            + " ops/README-ops-run.md and ops/README-ops-analysis.md)");
        continue;
      }
      String part = PARTS.partOf(key).name();
      if (part.equals("run")) {
        notes.accept("ignoring '" + key + "': only 'pairpulse run' uses it");
        continue;
      } else if (part.equals("serve") && !key.startsWith("drift.") && !key.equals(ServeConfig.COHORT_FLOOR)) {
        continue; // serve's other keys are ignored
      }
      String problem = ConfigParts.problem(definition, entry.getValue());
      if (problem != null) {
        problems.add(key + "=" + entry.getValue() + ": " + problem);
      } else if (part.equals("serve")) {
        serve.put(key, entry.getValue());
      } else if (part.equals("ingest")) {
        ingest.put(key, entry.getValue());
      } else {
        used.put(key, entry.getValue());
      }
    }
    if (!problems.isEmpty()) {
      throw new IllegalArgumentException(String.join("; ", problems));
    }
    BacktestSettings.Builder settings = base.toBuilder();
    if (!serve.isEmpty()) {
      ServeConfig config = ServeConfig.from(serve);
      settings.drift(config.driftSettings());
      if (serve.containsKey(ServeConfig.COHORT_FLOOR)) {
        settings.cohortFloor(config.doubleValue(ServeConfig.COHORT_FLOOR));
      }
    }
    if (!ingest.isEmpty()) {
      applyIngest(settings, base.limits(), ingest);
    }
    settings.engine(EngineKeys.apply(base.engine(), used));
    BacktestKeys.apply(settings, base, used);
    EvaluationSettings evaluation = base.evaluation() != null ? base.evaluation() : EvaluationSettings.defaults();
    return settings.evaluation(EvaluationKeys.apply(evaluation, EvaluationKeys.OFFLINE, used)).build();
  }

  /** Ingest's front settings and event limits from its keys (the wall-clock limits stay off unless set). */
  private static void applyIngest(BacktestSettings.Builder settings, EventLimits base, Map<String, Object> ingest) {
    Map<String, Object> props = new LinkedHashMap<>(ingest);
    props.put(IngestConfig.BOOTSTRAP_SERVERS, "unused:9092");
    props.put(IngestConfig.TOPICS, "unused");
    props.put(IngestConfig.CHECKPOINT_STORE, "none");
    IngestConfig config = new IngestConfig(props);
    EventLimits limits = config.eventLimits(base.clock());
    settings.front(config.frontSettings()).limits(new EventLimits(limits.maxBasketItems(),
        limits.maxIdChars(), ingest.containsKey(IngestConfig.MAX_FUTURE_MS) ? limits.maxFutureMillis() : Long.MAX_VALUE,
        ingest.containsKey(IngestConfig.MAX_PAST_MS) ? limits.maxPastMillis() : Long.MAX_VALUE,
        limits.maxAttributes(), limits.clock()));
  }
}
