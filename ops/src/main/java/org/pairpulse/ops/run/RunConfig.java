package org.pairpulse.ops.run;

import java.io.IOException;
import java.io.StringReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.Properties;
import java.util.Set;
import java.util.TreeMap;
import java.util.function.Function;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ops.evaluation.EvaluationSettings;
import org.pairpulse.ops.pipeline.Pipeline;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.sketch.engine.PairRanking;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.stats.SizeClasses;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The one configuration file of {@code pairpulse run}: a Java properties file whose keys are those of the
 * modules, so that one file also serves a backtest of the same setup.
 *
 * <table>
 *   <caption>Key families</caption>
 *   <tr><th>keys</th><th>what</th><th>defined by</th></tr>
 *   <tr><td>{@code bootstrap.servers}, {@code topics}, {@code group.id}, {@code checkpoint.*},
 *       {@code segments.*}, ...</td>
 *       <td>input, consumer group, checkpoints, event checks, segment attributes</td><td>{@link IngestConfig}</td></tr>
 *   <tr><td>{@code kafka.*}, {@code kafka.consumer.*}, {@code kafka.producer.*}, {@code kafka.admin.*}</td>
 *       <td>passed to the Kafka clients (SASL, TLS, tuning); also used by the alerts producer</td><td>Kafka</td></tr>
 *   <tr><td>{@code engine.*}, {@code horizon.*}</td><td>ε/δ, capacities, horizons</td><td>{@link EngineConfig},
 *       {@link HorizonSpec}</td></tr>
 *   <tr><td>{@code serve.*}, {@code drift.*}, {@code alerts.*}</td><td>HTTP, token, cohort floor, drift
 *       thresholds, alert topic and webhook</td><td>{@link ServeConfig}</td></tr>
 *   <tr><td>{@code alerts.kafka.enabled}, {@code run.*}, {@code evaluation.*}</td><td>this command (the
 *       live evaluation's keys are those a backtest settings file uses too)</td>
 *       <td>here</td></tr>
 * </table>
 *
 * <p>Values may name environment variables and files, resolved when the file is read:
 * {@code ${env:NAME}} and {@code ${file:/path}} (trimmed), so that secrets stay out of the file.
 *
 * <p>Checks, all reported at once: an unknown key names the closest valid key (or the {@code kafka.} form of
 * a Kafka client setting); a bad value names the key, the value and what is allowed; cross-key rules
 * (drift thresholds, checkpoint interval against the transaction timeout) come last.
 */
public final class RunConfig {
  /** Which component a key configures. */
  public enum Part { INGEST, ENGINE, SERVE, RUN }

  /**
   * One key.
   *
   * @param name the key
   * @param type its type, as documented
   * @param defaultValue the default as text; null when required
   * @param rule what a valid value is
   * @param doc one line of documentation
   * @param part the component it configures
   * @param check the value's problem (without the key), or null when the value is fine
   */
  public record Key(String name, String type, String defaultValue, String rule, String doc, Part part,
      Function<String, String> check) {
    public boolean required() {
      return defaultValue == null;
    }
  }

  /** Keys of Kafka clients pass through with this prefix ({@code kafka.X}, {@code kafka.<client>.X}). */
  public static final String KAFKA_PREFIX = IngestConfig.KAFKA_PREFIX;
  public static final String SEGMENT_ATTRIBUTES = IngestConfig.SEGMENT_ATTRIBUTES;
  public static final String ALERTS_KAFKA_ENABLED = "alerts.kafka.enabled";
  public static final String SKETCH_HEALTH_MILLIS = "run.sketchHealthIntervalMillis";
  public static final String EVALUATION_SHARE = "evaluation.share";
  public static final String EVALUATION_K = "evaluation.k";
  public static final String EVALUATION_HORIZON = "evaluation.horizon";
  /** Basket-size classes of the size-adjusted null model ({@link SizeClasses#parse}). */
  public static final String SIZE_CLASSES = "engine.sizeClasses";
  /** How pair occurrences rank for tracking ({@link PairRanking#parse}). */
  public static final String PAIR_RANKING = "engine.pairRanking";

  private static final List<Key> KEYS = keys();
  private static final Map<String, Key> BY_NAME = byName(KEYS);
  private static final Pattern REFERENCE = Pattern.compile("\\$\\{(env|file):([^}]+)}");

  private final String source;
  private final Map<String, String> values;
  private final Set<String> given;
  private final Map<String, String> kafka;

  private RunConfig(String source, Map<String, String> values, Set<String> given, Map<String, String> kafka) {
    this.source = source;
    this.values = Collections.unmodifiableMap(values);
    this.given = Collections.unmodifiableSet(given);
    this.kafka = Collections.unmodifiableMap(kafka);
  }

  /** Every key in documentation order ({@code kafka.*} pass-through keys are not listed). */
  public static List<Key> definitions() {
    return KEYS;
  }

  /**
   * Reads and checks a properties file.
   *
   * @throws RunConfigException listing every problem (with line numbers)
   * @throws IOException when the file cannot be read
   */
  public static RunConfig load(Path file) throws IOException {
    String text = Files.readString(file, StandardCharsets.UTF_8);
    Properties properties = new Properties();
    properties.load(new StringReader(text));
    Map<String, String> raw = new LinkedHashMap<>();
    for (String name : properties.stringPropertyNames()) {
      raw.put(name, properties.getProperty(name));
    }
    return of(raw, file.toString(), lineNumbers(text, raw.keySet()), System.getenv());
  }

  /**
   * Checks {@code raw} (key to text) over the defaults.
   *
   * @param source names the configuration in messages (a file name)
   * @throws RunConfigException listing every problem
   */
  public static RunConfig of(Map<String, String> raw, String source) {
    return of(raw, source, Map.of(), System.getenv());
  }

  static RunConfig of(Map<String, String> raw, String source, Map<String, Integer> lines, Map<String, String> env) {
    List<String> problems = new ArrayList<>();
    Map<String, String> values = new LinkedHashMap<>();
    for (Key key : KEYS) {
      values.put(key.name(), key.defaultValue());
    }
    Set<String> given = new LinkedHashSet<>();
    Map<String, String> kafka = new TreeMap<>();
    for (Map.Entry<String, String> entry : new TreeMap<>(raw).entrySet()) {
      String name = entry.getKey().trim();
      String where = lines.containsKey(entry.getKey()) ? "line " + lines.get(entry.getKey()) + ": " : "";
      String value;
      try {
        value = resolve(entry.getValue().trim(), env);
      } catch (IllegalArgumentException e) {
        problems.add(where + name + ": " + e.getMessage());
        continue;
      }
      if (name.startsWith(KAFKA_PREFIX)) {
        if (name.length() == KAFKA_PREFIX.length() || name.endsWith(".")) {
          problems.add(where + "'" + name + "' names no Kafka client setting (kafka.<setting>, e.g. kafka.security.protocol)");
        } else {
          kafka.put(name, value);
        }
        continue;
      }
      Key key = BY_NAME.get(name);
      if (key == null) {
        problems.add(where + unknown(name));
        continue;
      }
      String problem = key.check().apply(value);
      if (problem != null) {
        problems.add(where + name + "=" + Secrets.show(name, value) + ": " + problem + " (allowed: " + key.rule() + ")");
        continue;
      }
      values.put(name, value);
      given.add(name);
    }
    for (Key key : KEYS) {
      if (key.required() && !given.contains(key.name()) && problems.stream().noneMatch(p -> p.contains(key.name()))) {
        problems.add(key.name() + " is required: " + key.doc());
      }
    }
    problems.sort(java.util.Comparator.comparingInt(RunConfig::lineOf)); // stable: file order, then the rest
    if (problems.isEmpty()) {
      RunConfig config = new RunConfig(source, values, given, kafka);
      problems.addAll(config.crossChecks());
      if (problems.isEmpty()) {
        return config;
      }
    }
    throw new RunConfigException(source, problems);
  }

  private static int lineOf(String problem) {
    Matcher m = Pattern.compile("^line (\\d+): ").matcher(problem);
    return m.find() ? Integer.parseInt(m.group(1)) : Integer.MAX_VALUE;
  }

  /** Rules between keys, checked by building each component's settings. */
  private List<String> crossChecks() {
    List<String> problems = new ArrayList<>();
    try {
      new IngestConfig(ingestProperties());
    } catch (ConfigException e) {
      problems.add(e.getMessage());
    }
    try {
      serve();
    } catch (IllegalArgumentException e) {
      problems.add(e.getMessage());
    }
    try {
      engine();
    } catch (IllegalArgumentException e) {
      problems.add("engine: " + e.getMessage());
    }
    return problems;
  }

  // ------------------------------------------------------------------ the components' settings

  /** Where the configuration came from (a file name). */
  public String source() {
    return source;
  }

  /** The effective text value of a key (null for an unset required key, which a loaded config never has). */
  public String value(String key) {
    if (!BY_NAME.containsKey(key)) {
      throw new IllegalArgumentException("unknown key '" + key + "'");
    }
    return values.get(key);
  }

  /** Keys set in the source (the rest are defaults). */
  public Set<String> given() {
    return given;
  }

  /** The {@code kafka.*} pass-through settings, as given. */
  public Map<String, String> kafkaSettings() {
    return kafka;
  }

  /** Ingest's properties: its keys and the {@code kafka.*} pass-through. */
  public Map<String, Object> ingestProperties() {
    Map<String, Object> props = new HashMap<>();
    for (Key key : KEYS) {
      if (key.part() == Part.INGEST && values.get(key.name()) != null) {
        props.put(key.name(), values.get(key.name()));
      }
    }
    props.putAll(kafka);
    return props;
  }

  public ServeConfig serve() {
    Map<String, String> serve = new LinkedHashMap<>();
    for (Key key : KEYS) {
      if (key.part() == Part.SERVE) {
        serve.put(key.name(), values.get(key.name()));
      }
    }
    return ServeConfig.from(serve);
  }

  public EngineConfig engine() {
    List<HorizonSpec> horizons = List.of(
        HorizonSpec.decay("recent", Duration.ofMillis(longValue("horizon.recent.halfLifeMillis"))),
        HorizonSpec.window("day", Duration.ofMillis(longValue("horizon.day.lengthMillis")), intValue("horizon.day.panes")),
        HorizonSpec.window("baseline", Duration.ofMillis(longValue("horizon.baseline.lengthMillis")),
            intValue("horizon.baseline.panes")));
    return EngineConfig.builder()
        .horizons(horizons)
        .itemError(doubleValue("engine.itemEpsilon"), doubleValue("engine.itemDelta"))
        .pairError(doubleValue("engine.pairEpsilon"), doubleValue("engine.pairDelta"))
        .decayPairEpsilon(doubleValue("engine.decayPairEpsilon"))
        .trackedPairCapacity(intValue("engine.trackedPairCapacity"))
        .trackedItemCapacity(intValue("engine.trackedItemCapacity"))
        .maxPairsPerBasket(intValue("engine.maxPairsPerBasket"))
        .trackingHalfLifeMillis(longValue("engine.trackingHalfLifeMillis"))
        .seed(longValue("engine.seed"))
        .sizeClasses(SizeClasses.parse(values.get(SIZE_CLASSES)))
        .pairRanking(PairRanking.parse(values.get(PAIR_RANKING)))
        .build();
  }

  /** The configured segment attributes ({@code segments.attributes}); empty: segment all only. */
  public List<String> segmentAttributes() {
    return list(values.get(SEGMENT_ATTRIBUTES));
  }

  /** What {@link Pipeline#start} needs. */
  public Pipeline.Settings pipelineSettings() {
    ServeConfig serve = serve();
    boolean alertTopic = Boolean.parseBoolean(values.get(ALERTS_KAFKA_ENABLED));
    return new Pipeline.Settings(ingestProperties(), engine(), serve,
        alertTopic ? serve.string(ServeConfig.KAFKA_TOPIC) : "", Boolean.parseBoolean(values.get(IngestConfig.TOPICS_CREATE)),
        segmentAttributes(), longValue(SKETCH_HEALTH_MILLIS), evaluation());
  }

  private long longValue(String key) {
    return Long.parseLong(values.get(key));
  }

  private int intValue(String key) {
    return Integer.parseInt(values.get(key));
  }

  private double doubleValue(String key) {
    return Double.parseDouble(values.get(key));
  }

  // ------------------------------------------------------------------ showing it

  /**
   * The effective configuration, one key a line in documentation order, then the pass-through settings;
   * {@code *} marks keys set in the source; secrets are masked.
   */
  public String describe() {
    int width = KEYS.stream().mapToInt(k -> k.name().length()).max().orElse(30);
    for (String k : kafka.keySet()) {
      width = Math.max(width, k.length());
    }
    StringBuilder out = new StringBuilder();
    out.append("# effective configuration of ").append(source)
        .append(" (* = set there, others are defaults; secrets masked)").append(System.lineSeparator());
    Part part = null;
    for (Key key : KEYS) {
      if (key.part() != part) {
        part = key.part();
        out.append("# ").append(part.name().toLowerCase(Locale.ROOT)).append(System.lineSeparator());
      }
      line(out, width, given.contains(key.name()), key.name(), Secrets.show(key.name(), values.get(key.name())));
    }
    out.append("# kafka client pass-through").append(System.lineSeparator());
    if (kafka.isEmpty()) {
      out.append("  (none)").append(System.lineSeparator());
    }
    int kafkaWidth = width;
    kafka.forEach((k, v) -> line(out, kafkaWidth, true, k, Secrets.show(k, v)));
    long stateBytes = stateBytesPerPartition();
    out.append(String.format(Locale.ROOT, "# memory: one partition's engine state is %,d bytes (fixed by engine.* and"
        + " horizon.*); heap: about 3 x that x partitions owned + 256 MB (ops/RUNBOOK.md, Memory)", stateBytes))
        .append(System.lineSeparator());
    SegmentSettings segments = segmentSettings();
    if (segments.enabled()) {
      long segmentBytes = segmentStateBytes();
      out.append(String.format(Locale.ROOT, "# segments: %s; each segment engine is %,d bytes; a partition holds at most"
          + " 1 + %d x %d engines: up to %,d bytes of state per partition", String.join(",", segments.attributes()),
          segmentBytes, segments.attributes().size(), segments.maxValuesPerAttribute(),
          stateBytes + segmentBytes * (segments.maxEnginesPerPartition() - 1))).append(System.lineSeparator());
    }
    return out.toString();
  }

  private static void line(StringBuilder out, int width, boolean given, String key, String value) {
    out.append(given ? "* " : "  ").append(key);
    out.append(" ".repeat(Math.max(1, width - key.length() + 1))).append("= ").append(value == null ? "" : value)
        .append(System.lineSeparator());
  }

  /** The state bytes of one partition's engine of segment all: an empty engine of this configuration, measured. */
  public long stateBytesPerPartition() {
    return new PairEngine(engine()).stateBytes();
  }

  /** Ingest's segment settings ({@code segments.*}). */
  public SegmentSettings segmentSettings() {
    return new IngestConfig(ingestProperties()).segmentSettings();
  }

  /** The state bytes of one segment engine (an empty one, measured); 0 without segment attributes. */
  public long segmentStateBytes() {
    SegmentSettings segments = segmentSettings();
    return segments.enabled() ? new PairEngine(segments.segmentEngine(engine())).stateBytes() : 0;
  }

  /** The key table of the documentation (Markdown): key, type, default, allowed, meaning. */
  public static String markdownTable() {
    StringBuilder out = new StringBuilder();
    out.append("| key | type | default | allowed | meaning |\n| --- | --- | --- | --- | --- |\n");
    for (Key key : KEYS) {
      out.append("| `").append(key.name()).append("` | ").append(key.type()).append(" | ")
          .append(key.required() ? "(required)" : key.defaultValue().isEmpty() ? "(empty)" : "`" + key.defaultValue() + "`")
          .append(" | ").append(cell(key.rule())).append(" | ").append(cell(key.doc())).append(" |\n");
    }
    out.append("| `kafka.*`, `kafka.consumer.*`, `kafka.producer.*`, `kafka.admin.*` | | | any Kafka client setting |"
        + " passed to every Kafka client of the process (ingest's consumer, producer and admin, the alerts producer),"
        + " or to one kind; the specific form wins. Secrets here are masked by `--print-config` |\n");
    return out.toString();
  }

  private static String cell(String text) {
    return text.replace("|", "\\|").replace("\n", " ");
  }

  // ------------------------------------------------------------------ reading values

  /** Replaces {@code ${env:NAME}} and {@code ${file:PATH}} references. */
  static String resolve(String value, Map<String, String> env) {
    Matcher m = REFERENCE.matcher(value);
    StringBuilder out = new StringBuilder();
    while (m.find()) {
      String name = m.group(2).trim();
      String replacement;
      if (m.group(1).equals("env")) {
        replacement = env.get(name);
        if (replacement == null) {
          throw new IllegalArgumentException("environment variable " + name + " is not set");
        }
      } else {
        try {
          replacement = Files.readString(Path.of(name), StandardCharsets.UTF_8).trim();
        } catch (IOException | RuntimeException e) {
          throw new IllegalArgumentException("cannot read " + name + " (" + e.getClass().getSimpleName() + ")");
        }
      }
      m.appendReplacement(out, Matcher.quoteReplacement(replacement));
    }
    m.appendTail(out);
    return out.toString();
  }

  private static Map<String, Integer> lineNumbers(String text, Set<String> keys) {
    Map<String, Integer> lines = new HashMap<>();
    String[] rows = text.split("\r\n|\r|\n", -1);
    for (int i = 0; i < rows.length; i++) {
      String row = rows[i].stripLeading();
      if (row.startsWith("#") || row.startsWith("!")) {
        continue;
      }
      for (String key : keys) {
        if (row.startsWith(key) && (row.length() == key.length() || "=: \t".indexOf(row.charAt(key.length())) >= 0)) {
          lines.putIfAbsent(key, i + 1);
        }
      }
    }
    return lines;
  }

  /** The message for an unknown key: the closest known key, or the kafka. form of a Kafka client setting. */
  static String unknown(String name) {
    if (name.equals(ServeConfig.KAFKA_BOOTSTRAP)) {
      return "'" + name + "' is not used by 'pairpulse run': alerts go to the input cluster (bootstrap.servers) with"
          + " the kafka.* settings; set " + ALERTS_KAFKA_ENABLED + "=false to send none";
    }
    if (ProducerConfig.configNames().contains(name) || ConsumerConfig.configNames().contains(name)
        || AdminClientConfig.configNames().contains(name)) {
      return "unknown key '" + name + "'; Kafka client settings take the prefix kafka.: did you mean '"
          + KAFKA_PREFIX + name + "'?";
    }
    String best = null;
    int bestDistance = Integer.MAX_VALUE;
    for (Key key : KEYS) {
      int d = distance(name.toLowerCase(Locale.ROOT), key.name().toLowerCase(Locale.ROOT));
      if (d < bestDistance) {
        bestDistance = d;
        best = key.name();
      }
    }
    return "unknown key '" + name + "'; did you mean '" + best + "'? (every key: ops/README-ops-run.md)";
  }

  /** Levenshtein distance. */
  static int distance(String a, String b) {
    int[] previous = new int[b.length() + 1];
    int[] current = new int[b.length() + 1];
    for (int j = 0; j <= b.length(); j++) {
      previous[j] = j;
    }
    for (int i = 1; i <= a.length(); i++) {
      current[0] = i;
      for (int j = 1; j <= b.length(); j++) {
        int cost = a.charAt(i - 1) == b.charAt(j - 1) ? 0 : 1;
        current[j] = Math.min(Math.min(current[j - 1] + 1, previous[j] + 1), previous[j - 1] + cost);
      }
      int[] swap = previous;
      previous = current;
      current = swap;
    }
    return previous[b.length()];
  }

  static List<String> list(String text) {
    if (text == null || text.isBlank()) {
      return List.of();
    }
    return Arrays.stream(text.split(",")).map(String::trim).filter(s -> !s.isEmpty()).toList();
  }

  // ------------------------------------------------------------------ the keys

  private static Map<String, Key> byName(List<Key> keys) {
    Map<String, Key> map = new LinkedHashMap<>();
    for (Key key : keys) {
      if (map.put(key.name(), key) != null) {
        throw new IllegalStateException("key defined twice: " + key.name());
      }
    }
    return map;
  }

  private static List<Key> keys() {
    List<Key> keys = new ArrayList<>();
    ingestKeys(keys);
    engineKeys(keys);
    serveKeys(keys);
    runKeys(keys);
    return List.copyOf(keys);
  }

  private static void ingestKeys(List<Key> keys) {
    for (ConfigDef.ConfigKey k : IngestConfig.DEFINITION.configKeys().values()) {
      String type = k.type.name().toLowerCase(Locale.ROOT);
      String defaultValue = k.hasDefault() ? Objects.toString(ConfigDef.convertToString(k.defaultValue, k.type), "") : null;
      String rule = k.validator != null ? k.validator.toString() : switch (k.type) {
        case BOOLEAN -> "true or false";
        case LIST -> "comma-separated list";
        case INT, LONG -> "an integer";
        default -> "any text";
      };
      keys.add(new Key(k.name, type, defaultValue, rule, k.documentation, Part.INGEST, value -> {
        try {
          Object parsed = ConfigDef.parseType(k.name, value, k.type);
          if (k.validator != null) {
            k.validator.ensureValid(k.name, parsed);
          }
          return null;
        } catch (ConfigException e) {
          return kafkaReason(e, k.name);
        }
      }));
    }
  }

  /** "Invalid value x for configuration y: reason" → "reason". */
  private static String kafkaReason(ConfigException e, String name) {
    String message = e.getMessage() == null ? "invalid" : e.getMessage();
    int at = message.indexOf("configuration " + name);
    if (at >= 0) {
      int colon = message.indexOf(':', at);
      if (colon >= 0 && colon + 1 < message.length()) {
        return message.substring(colon + 1).trim();
      }
    }
    return message;
  }

  private static void engineKeys(List<Key> keys) {
    EngineConfig d = EngineConfig.defaults();
    HorizonSpec recent = HorizonSpec.RECENT;
    HorizonSpec day = HorizonSpec.DAY;
    HorizonSpec baseline = HorizonSpec.BASELINE;
    keys.add(real("engine.itemEpsilon", d.itemEpsilon(), "(0, 1)", 0, 1,
        "ε of the item count-min sketches: an item count overcounts by at most ε·W (W: item occurrences in the horizon)"));
    keys.add(real("engine.itemDelta", d.itemDelta(), "(0, 1)", 0, 1,
        "δ of the item sketches: the ε bound fails with probability at most δ (depth ⌈ln 1/δ⌉)"));
    keys.add(real("engine.pairEpsilon", d.pairEpsilon(), "(0, 1)", 0, 1,
        "ε of the pair sketches of every window pane: memory grows as 1/ε per pane (width ⌈e/ε⌉, rounded up to a power"
            + " of two)"));
    keys.add(real("engine.pairDelta", d.pairDelta(), "(0, 1)", 0, 1, "δ of the pair sketches"));
    keys.add(real("engine.decayPairEpsilon", d.decayPairEpsilon(), "(0, 1)", 0, 1,
        "ε of the pair sketch of a decay horizon (one sketch: it decides which pairs enter the tracked table)"));
    keys.add(integer("engine.trackedPairCapacity", d.trackedPairCapacity(), 2, EngineConfig.MAX_CAPACITY,
        "pairs for which statistics are kept (every pair in more than W/capacity of the pair occurrences is tracked)"));
    keys.add(integer("engine.trackedItemCapacity", d.trackedItemCapacity(), 2, EngineConfig.MAX_CAPACITY,
        "items counted exactly once tracked"));
    keys.add(integer("engine.maxPairsPerBasket", d.maxPairsPerBasket(), 1, 1 << 20,
        "pairs counted per basket; above it pairs are sampled with inverse-probability weights (unbiased)"));
    keys.add(longKey("engine.trackingHalfLifeMillis", d.trackingHalfLifeMillis(), 1000, Long.MAX_VALUE,
        "half-life of the weights that rank tracked pairs and items (7 days)"));
    keys.add(longKey("engine.seed", d.seed(), Long.MIN_VALUE, Long.MAX_VALUE,
        "hash seed; every instance of a group must use the same (their states are merged)"));
    keys.add(new Key(SIZE_CLASSES, "string", d.sizeClasses().toString(), "sizes from 1, e.g. 1,2,3,4-5,6-9,10+",
        "basket-size classes of the size-adjusted null model (expected pair counts within classes); 1+ is one class:"
            + " the textbook measures throughout. Every instance of a group must use the same", Part.ENGINE, value -> {
              try {
                SizeClasses.parse(value);
                return null;
              } catch (IllegalArgumentException e) {
                return "not size classes (e.g. 1,2,3,4-5,6+)";
              }
            }));
    keys.add(new Key(PAIR_RANKING, "string", d.pairRanking().wireName(), "fractional, count",
        "how a pair occurrence weighs in the rank that decides which pairs are tracked: fractional (1/(k − 1) in a basket"
            + " of k items, so large baskets do not crowd the table) or count (by frequency). Counts are the same either"
            + " way. Every instance of a group must use the same", Part.ENGINE, value -> {
              try {
                PairRanking.parse(value);
                return null;
              } catch (IllegalArgumentException e) {
                return "not fractional or count";
              }
            }));
    keys.add(longKey("horizon.recent.halfLifeMillis", recent.halfLifeMillis(), 1000, Long.MAX_VALUE,
        "half-life of the recent decay horizon (6 h); drift compares recent against baseline"));
    keys.add(longKey("horizon.day.lengthMillis", day.lengthMillis(), 1000, Long.MAX_VALUE,
        "length of the day window (24 h); a multiple of horizon.day.panes"));
    keys.add(integer("horizon.day.panes", day.paneCount(), 1, HorizonSpec.MAX_PANES,
        "panes of the day window: its time resolution is length / panes"));
    keys.add(longKey("horizon.baseline.lengthMillis", baseline.lengthMillis(), 1000, Long.MAX_VALUE,
        "length of the baseline window (28 days); the cohort floor's evidence horizon when it is the longest window"));
    keys.add(integer("horizon.baseline.panes", baseline.paneCount(), 1, HorizonSpec.MAX_PANES,
        "panes of the baseline window"));
  }

  private static void serveKeys(List<Key> keys) {
    for (ServeConfig.Key k : ServeConfig.keys()) {
      if (k.name().equals(ServeConfig.KAFKA_BOOTSTRAP)) {
        continue; // run sends alerts to the input cluster with the kafka.* settings
      }
      String type = k.type().name().toLowerCase(Locale.ROOT);
      // the key's own rule here; rules between keys (drift enter >= exit, ...) when the whole config is built
      keys.add(new Key(k.name(), type, k.defaultValue(), k.rule(), k.doc(), Part.SERVE, value -> {
        Object parsed;
        try {
          parsed = switch (k.type()) {
            case STRING -> value;
            case INT -> Integer.parseInt(value);
            case LONG -> Long.parseLong(value);
            case DOUBLE -> Double.parseDouble(value);
            case BOOLEAN -> {
              if (!value.equals("true") && !value.equals("false")) {
                throw new NumberFormatException();
              }
              yield Boolean.parseBoolean(value);
            }
          };
        } catch (NumberFormatException e) {
          return "not " + (k.type() == ServeConfig.Type.INT || k.type() == ServeConfig.Type.LONG ? "an integer"
              : k.type() == ServeConfig.Type.BOOLEAN ? "true or false" : "a number");
        }
        if (parsed instanceof Double v && Double.isNaN(v)) {
          return "not a number";
        }
        return k.valid().test(parsed) ? null : "not allowed";
      }));
    }
  }

  private static void runKeys(List<Key> keys) {
    keys.add(new Key(ALERTS_KAFKA_ENABLED, "boolean", "true", "true or false",
        "send alert events to alerts.kafka.topic on the input cluster (same kafka.* settings); false: no topic",
        Part.RUN, value -> value.equals("true") || value.equals("false") ? null : "not true or false"));
    keys.add(longKey(SKETCH_HEALTH_MILLIS, 30_000, 1000, Long.MAX_VALUE,
        "how often the state's fill and error bounds are captured for the status page and /metrics (each time one"
            + " merged copy of the state is made)", Part.RUN));
    keys.add(new Key(EVALUATION_SHARE, "double", "0.05", "[0, 1]",
        "share of baskets the live evaluation tests before ingest counts them (one item hidden; hit rate against a"
            + " table rebuilt once a day and the most popular items, on the dashboard and in /metrics); 0: none. In"
            + " group mode only the alert leader evaluates, from its own ingest", Part.RUN, value -> {
              try {
                double v = Double.parseDouble(value);
                return v >= 0 && v <= 1 ? null : "out of range";
              } catch (NumberFormatException e) {
                return "not a number";
              }
            }));
    keys.add(new Key(EVALUATION_K, "int", Integer.toString(EvaluationSettings.DEFAULT_K), "1.." + EvaluationSettings.MAX_K,
        "suggestions asked for per tested basket: the k of hit rate at k", Part.RUN, value -> {
          try {
            int v = Integer.parseInt(value);
            return v >= 1 && v <= EvaluationSettings.MAX_K ? null : "out of range";
          } catch (NumberFormatException e) {
            return "not an integer";
          }
        }));
    keys.add(new Key(EVALUATION_HORIZON, "string", HorizonSpec.RECENT.name(), "recent, day or baseline",
        "the horizon the evaluation's suggestions use", Part.RUN,
        value -> List.of(HorizonSpec.RECENT.name(), HorizonSpec.DAY.name(), HorizonSpec.BASELINE.name()).contains(value)
            ? null : "not a horizon"));
  }

  /** The live evaluation's settings ({@code evaluation.*}); a share of 0 turns it off. */
  public EvaluationSettings evaluation() {
    return EvaluationSettings.defaults().withShare(doubleValue(EVALUATION_SHARE)).withK(intValue(EVALUATION_K))
        .withHorizon(values.get(EVALUATION_HORIZON));
  }

  private static Key real(String name, double defaultValue, String rule, double lowExclusive, double highExclusive,
      String doc) {
    return new Key(name, "double", java.math.BigDecimal.valueOf(defaultValue).toPlainString(), rule, doc, Part.ENGINE,
        value -> {
          try {
            double v = Double.parseDouble(value);
            return v > lowExclusive && v < highExclusive ? null : "out of range";
          } catch (NumberFormatException e) {
            return "not a number";
          }
        });
  }

  private static Key integer(String name, int defaultValue, int low, int high, String doc) {
    return new Key(name, "int", Integer.toString(defaultValue), low + ".." + high, doc, Part.ENGINE, value -> {
      try {
        int v = Integer.parseInt(value);
        return v >= low && v <= high ? null : "out of range";
      } catch (NumberFormatException e) {
        return "not an integer";
      }
    });
  }

  private static Key longKey(String name, long defaultValue, long low, long high, String doc) {
    return longKey(name, defaultValue, low, high, doc, Part.ENGINE);
  }

  private static Key longKey(String name, long defaultValue, long low, long high, String doc, Part part) {
    String rule = low == Long.MIN_VALUE ? "any integer" : high == Long.MAX_VALUE ? ">= " + low : low + ".." + high;
    return new Key(name, "long", Long.toString(defaultValue), rule, doc, part, value -> {
      try {
        long v = Long.parseLong(value);
        return v >= low && v <= high ? null : "out of range";
      } catch (NumberFormatException e) {
        return "not an integer";
      }
    });
  }
}
