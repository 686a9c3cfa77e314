package org.pairpulse.ops.product.run;

import java.io.IOException;
import java.io.StringReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.Comparator;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.TreeMap;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.config.ConfigDef.ConfigKey;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.kafka.EngineKeys;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ops.product.evaluation.EvaluationKeys;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.product.run.ConfigParts.Part;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * The one configuration file of {@code pairpulse run}: a Java properties file whose keys are those of the
 * modules, so that one file also serves a backtest of the same setup. Every key is defined once, with Kafka's
 * {@link org.apache.kafka.common.config.ConfigDef}, by the part it configures; this class composes the parts
 * ({@link #PARTS}) and builds each component's settings.
 *
 * <table>
 *   <caption>Key families</caption>
 *   <tr><th>keys</th><th>what</th><th>defined by</th></tr>
 *   <tr><td>{@code bootstrap.servers}, {@code topics}, {@code group.id}, {@code checkpoint.*},
 *       {@code segments.*}, ...</td>
 *       <td>input, consumer group, checkpoints, event checks, segment attributes</td><td>{@link IngestConfig}</td></tr>
 *   <tr><td>{@code kafka.*}, {@code kafka.consumer.*}, {@code kafka.producer.*}, {@code kafka.admin.*}</td>
 *       <td>passed to the Kafka clients (SASL, TLS, tuning); also used by the alerts producer</td><td>Kafka</td></tr>
 *   <tr><td>{@code engine.*}, {@code horizon.*}</td><td>ε/δ, capacities, horizons</td><td>{@link EngineKeys}</td></tr>
 *   <tr><td>{@code serve.*}, {@code drift.*}, {@code alerts.*}</td><td>HTTP, token, cohort floor, drift
 *       thresholds, alert topic and webhook</td><td>{@link ServeConfig}</td></tr>
 *   <tr><td>{@code alerts.kafka.enabled}, {@code run.*}, {@code evaluation.*}</td><td>this command (the
 *       live evaluation's keys are those a backtest settings file uses too)</td>
 *       <td>{@link RunKeys}, {@link EvaluationKeys#LIVE}</td></tr>
 * </table>
 *
 * <p>Values may name environment variables and files, resolved through Kafka's config providers when the file is
 * read ({@link ConfigReferences}): {@code ${env:NAME}}, {@code ${file:/path.properties:key}},
 * {@code ${dir:/path:name}}, so that secrets stay out of the file.
 *
 * <p>Checks, all reported at once: an unknown key names the closest valid key (or the {@code kafka.} form of
 * a Kafka client setting); a bad value names the key, the value and what is allowed; cross-key rules
 * (drift thresholds, checkpoint interval against the transaction timeout) come last. A key's earlier spelling
 * ({@code engine.pairEpsilon}) is read as its key ({@code engine.pair.epsilon}) with a deprecation warning
 * ({@link #deprecations()}).
 */
public final class RunConfig {
  /** Keys of Kafka clients pass through with this prefix ({@code kafka.X}, {@code kafka.<client>.X}). */
  public static final String KAFKA_PREFIX = IngestConfig.KAFKA_PREFIX;

  /** The parts a run configuration composes, in documentation order. */
  public static final ConfigParts PARTS = new ConfigParts(List.of(
      new Part("ingest", IngestConfig.DEFINITION, Map.of()),
      new Part("engine", EngineKeys.DEFINITION, EngineKeys.RENAMED),
      // run sends alerts to the input cluster with the kafka.* settings: serve's own bootstrap key is not used
      new Part("serve", ServeConfig.DEFINITION, ServeConfig.RENAMED).without(ServeConfig.KAFKA_BOOTSTRAP),
      Part.of("run", RunKeys.RENAMED, RunKeys.DEFINITION, EvaluationKeys.LIVE)));

  private final String source;
  private final Map<String, String> values;
  private final Set<String> given;
  private final Map<String, String> kafka;
  private final List<String> deprecations;

  private RunConfig(String source, Map<String, String> values, Set<String> given, Map<String, String> kafka,
      List<String> deprecations) {
    this.source = source;
    this.values = Collections.unmodifiableMap(values);
    this.given = Collections.unmodifiableSet(given);
    this.kafka = Collections.unmodifiableMap(kafka);
    this.deprecations = List.copyOf(deprecations);
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
    List<String> deprecations = new ArrayList<>();
    Map<String, String> values = new LinkedHashMap<>();
    for (ConfigKey key : PARTS.keys()) {
      values.put(key.name, ConfigParts.defaultText(key));
    }
    Map<String, Integer> lineOf = new HashMap<>();
    Map<String, String> trimmed = new TreeMap<>();
    raw.forEach((k, v) -> {
      trimmed.put(k.trim(), v);
      if (lines.containsKey(k)) {
        lineOf.put(PARTS.renamed().getOrDefault(k.trim(), k.trim()), lines.get(k));
      }
    });
    Map<String, String> renamed = PARTS.rename(trimmed, deprecations::add, problems::add);
    ConfigReferences references = new ConfigReferences(env);
    Set<String> given = new LinkedHashSet<>();
    Map<String, String> kafka = new TreeMap<>();
    for (Map.Entry<String, String> entry : renamed.entrySet()) {
      String name = entry.getKey();
      String where = lineOf.containsKey(name) ? "line " + lineOf.get(name) + ": " : "";
      String value;
      try {
        value = references.resolve(name, entry.getValue().trim(), deprecations::add);
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
      ConfigKey key = PARTS.key(name);
      if (key == null) {
        problems.add(where + unknown(name));
        continue;
      }
      String problem = ConfigParts.problem(key, value);
      if (problem != null) {
        problems.add(where + name + "=" + Secrets.show(name, value) + ": " + problem);
        continue;
      }
      values.put(name, value);
      given.add(name);
    }
    for (ConfigKey key : PARTS.keys()) {
      if (!key.hasDefault() && !given.contains(key.name) && problems.stream().noneMatch(p -> p.contains(key.name))) {
        problems.add(key.name + " is required: " + key.documentation);
      }
    }
    problems.sort(Comparator.comparingInt(RunConfig::lineOf)); // stable: file order, then the rest
    if (problems.isEmpty()) {
      RunConfig config = new RunConfig(source, values, given, kafka, deprecations);
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
    } catch (IllegalArgumentException | ConfigException e) {
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
    if (PARTS.key(key) == null) {
      throw new IllegalArgumentException("unknown key '" + key + "'");
    }
    return values.get(key);
  }

  /** Keys set in the source (the rest are defaults), in their current spelling. */
  public Set<String> given() {
    return given;
  }

  /** One warning per earlier key spelling or reference form read, naming its replacement (empty: none). */
  public List<String> deprecations() {
    return deprecations;
  }

  /** The {@code kafka.*} pass-through settings, as given. */
  public Map<String, String> kafkaSettings() {
    return kafka;
  }

  /** Ingest's properties: its keys and the {@code kafka.*} pass-through. */
  public Map<String, Object> ingestProperties() {
    Map<String, Object> props = new HashMap<>();
    props.putAll(part("ingest", false));
    props.putAll(kafka);
    return props;
  }

  public ServeConfig serve() {
    return ServeConfig.from(part("serve", true));
  }

  public EngineConfig engine() {
    return EngineKeys.apply(EngineConfig.defaults(), part("engine", true));
  }

  /** The live evaluation's settings ({@code evaluation.*}); a share of 0 turns it off. */
  public EvaluationSettings evaluation() {
    return EvaluationKeys.apply(EvaluationSettings.defaults().withShare(EvaluationKeys.LIVE_SHARE), EvaluationKeys.LIVE,
        values);
  }

  /** The values of one part's keys: those given, or all that have a value. */
  private Map<String, String> part(String name, boolean givenOnly) {
    Map<String, String> out = new LinkedHashMap<>();
    for (ConfigKey key : PARTS.keys()) {
      String value = values.get(key.name);
      if (PARTS.partOf(key.name).name().equals(name) && value != null && (!givenOnly || given.contains(key.name))) {
        out.put(key.name, value);
      }
    }
    return out;
  }

  /** The configured segment attributes ({@code segments.attributes}); empty: segment all only. */
  public List<String> segmentAttributes() {
    return list(values.get(IngestConfig.SEGMENT_ATTRIBUTES));
  }

  /** What {@link Pipeline#start} needs. */
  public Pipeline.Settings pipelineSettings() {
    ServeConfig serve = serve();
    boolean alertTopic = Boolean.parseBoolean(values.get(RunKeys.ALERTS_KAFKA_ENABLED));
    return new Pipeline.Settings(ingestProperties(), engine(), serve,
        alertTopic ? serve.string(ServeConfig.KAFKA_TOPIC) : "", Boolean.parseBoolean(values.get(IngestConfig.TOPICS_CREATE)),
        segmentAttributes(), Long.parseLong(values.get(RunKeys.SKETCH_HEALTH_INTERVAL_MS)), evaluation());
  }

  // ------------------------------------------------------------------ showing it

  /**
   * The effective configuration, one key a line in documentation order, then the pass-through settings;
   * {@code *} marks keys set in the source; secrets are masked.
   */
  public String describe() {
    int width = PARTS.keys().stream().mapToInt(k -> k.name.length()).max().orElse(30);
    for (String k : kafka.keySet()) {
      width = Math.max(width, k.length());
    }
    StringBuilder out = new StringBuilder();
    out.append("# effective configuration of ").append(source)
        .append(" (* = set there, others are defaults; secrets masked)").append(System.lineSeparator());
    for (Part part : PARTS.parts()) {
      out.append("# ").append(part.name()).append(System.lineSeparator());
      for (String name : part.definition().names()) {
        line(out, width, given.contains(name), name, Secrets.show(name, values.get(name)));
      }
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

  /**
   * The key table of the documentation (Markdown): key, type, default, allowed, meaning, then the Kafka
   * pass-through row.
   */
  public static String markdownTable() {
    return PARTS.markdownTable()
        + "| `kafka.*`, `kafka.consumer.*`, `kafka.producer.*`, `kafka.admin.*` | | | any Kafka client setting |"
        + " passed to every Kafka client of the process (ingest's consumer, producer and admin, the alerts producer),"
        + " or to one kind; the specific form wins. Secrets here are masked by `--print-config` |\n";
  }

  // ------------------------------------------------------------------ reading values

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
          + " the kafka.* settings; set " + RunKeys.ALERTS_KAFKA_ENABLED + "=false to send none";
    }
    if (ProducerConfig.configNames().contains(name) || ConsumerConfig.configNames().contains(name)
        || AdminClientConfig.configNames().contains(name)) {
      return "unknown key '" + name + "'; Kafka client settings take the prefix kafka.: did you mean '"
          + KAFKA_PREFIX + name + "'?";
    }
    return "unknown key '" + name + "'; did you mean '" + PARTS.closest(name) + "'? (every key: ops/README-ops-run.md)";
  }

  static List<String> list(String text) {
    if (text == null || text.isBlank()) {
      return List.of();
    }
    return Arrays.stream(text.split(",")).map(String::trim).filter(s -> !s.isEmpty()).toList();
  }
}
