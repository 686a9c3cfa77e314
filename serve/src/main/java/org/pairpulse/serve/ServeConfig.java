package org.pairpulse.serve;

import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.function.Predicate;
import org.apache.kafka.common.config.AbstractConfig;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.LambdaValidator;
import org.apache.kafka.common.config.ConfigDef.Type;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.serve.drift.DriftSettings;

/**
 * serve's settings: every key with its type, default, validator and a one-line doc, defined with Kafka's
 * {@link ConfigDef} like ingest's keys. Immutable; {@link #with} returns a changed copy. README-serve.md lists the
 * same table (a test keeps the two in step); {@code pairpulse run} composes {@link #DEFINITION} into its file.
 *
 * <p>Keys are Kafka's dotted lower case with the unit last ({@code serve.watch.ms}); {@link #RENAMED} maps the
 * earlier spellings ({@code serve.watchMillis}, ...) to them for the readers of configuration files.
 */
public final class ServeConfig extends AbstractConfig {
  /** The definitions, in documentation order (filled by the key constants below). */
  public static final ConfigDef DEFINITION = new ConfigDef();

  public static final String HOST = define("serve.host", Type.STRING, "127.0.0.1", "a host name or address",
      "address to bind; 127.0.0.1 keeps the server local, 0.0.0.0 exposes it", v -> !((String) v).isBlank());
  public static final String PORT = define("serve.port", Type.INT, "8470", "0..65535 (0: any free port)",
      "TCP port", v -> (int) v >= 0 && (int) v <= 65535);
  public static final String TOKEN = define("serve.token", Type.STRING, "", "empty, or at least 16 characters",
      "bearer token required on every endpoint but health and the dashboard's static files; empty: no token",
      v -> ((String) v).isEmpty() || ((String) v).length() >= 16);
  public static final String CORS_ORIGINS = define("serve.cors.origins", Type.STRING, "",
      "empty, or comma-separated origins", "origins allowed to call the API from a browser; empty: CORS off", v -> true);
  public static final String MAX_BODY_BYTES = define("serve.max.body.bytes", Type.INT, "16384", "1024..1048576",
      "largest request body accepted (413 above)", v -> (int) v >= 1024 && (int) v <= 1 << 20);
  public static final String MAX_BASKET_ITEMS = define("serve.max.basket.items", Type.INT, "50", "1..1000",
      "most items in one suggestion request", v -> (int) v >= 1 && (int) v <= 1000);
  public static final String MAX_ID_LENGTH = define("serve.max.id.chars", Type.INT, "128", "1..1024",
      "longest item id or segment name accepted", v -> (int) v >= 1 && (int) v <= 1024);
  public static final String MAX_COUNT = define("serve.max.count", Type.INT, "100", "1..10000",
      "largest count a request may ask for", v -> (int) v >= 1 && (int) v <= 10_000);
  public static final String COHORT_FLOOR = define("serve.cohort.floor", Type.DOUBLE, "50", ">= 0",
      "minimum distinct baskets behind any published statistic (privacy); 0 publishes everything",
      v -> (double) v >= 0 && !Double.isInfinite((double) v));
  public static final String DEFAULT_HORIZON = define("serve.default.horizon", Type.STRING, "recent",
      "a horizon name", "horizon used when a request names none", v -> !((String) v).isBlank());
  public static final String CACHE_ENTRIES = define("serve.cache.entries", Type.INT, "20000", "0..1000000 (0: off)",
      "responses cached per table version (suggestions, rules, top and repelling pairs, items)",
      v -> (int) v >= 0 && (int) v <= 1_000_000);
  public static final String MAX_NEIGHBOURS = define("serve.max.neighbours.per.item", Type.INT, "500", ">= 1",
      "neighbours read per basket item when suggesting, best first by the table's measure", v -> (int) v >= 1);
  public static final String WATCH_MILLIS = define("serve.watch.ms", Type.LONG, "100", "10..60000",
      "how often serve looks for a new pair table (floored view, trend point, drift, alerts)",
      v -> (long) v >= 10 && (long) v <= 60_000);
  public static final String TREND_POINTS = define("serve.trend.points", Type.INT, "240", "2..10000",
      "trend points kept per segment (one per new table version, oldest dropped)", v -> (int) v >= 2 && (int) v <= 10_000);
  public static final String TREND_PAIRS = define("serve.trend.pairs.per.point", Type.INT, "150", "0..10000",
      "pairs recorded per trend point: the best by the table's measure, plus drifting and asked-for pairs",
      v -> (int) v >= 0 && (int) v <= 10_000);
  public static final String TREND_ITEMS = define("serve.trend.items.per.point", Type.INT, "50", "0..10000",
      "items recorded per trend point: the most frequent, plus asked-for items", v -> (int) v >= 0 && (int) v <= 10_000);
  public static final String TREND_PINNED = define("serve.trend.pinned", Type.INT, "32", "0..1000",
      "pairs and items asked for through the trend endpoint that stay recorded (least recently asked dropped)",
      v -> (int) v >= 0 && (int) v <= 1000);
  public static final String ALERT_HISTORY = define("serve.alerts.history", Type.INT, "500", "1..100000",
      "alert events kept for the alert history endpoint", v -> (int) v >= 1 && (int) v <= 100_000);
  public static final String DRIFT_ENTER_ROOT_G2 = define("drift.enter.root.g2", Type.DOUBLE, "5.0", ">= drift.exit.root.g2",
      "size of signed √G² a drift test (rate or association) needs to count as moved; p ≈ 5.7e-7", v -> (double) v >= 0);
  public static final String DRIFT_EXIT_ROOT_G2 = define("drift.exit.root.g2", Type.DOUBLE, "3.0", ">= 0",
      "an active emerging / fading alert clears when neither test stays this strong", v -> (double) v >= 0);
  public static final String DRIFT_ENTER_RATIO = define("drift.enter.ratio", Type.DOUBLE, "1.5",
      ">= drift.exit.ratio", "rate ratio or odds-ratio ratio (recent / reference) needed to enter emerging (its inverse: fading)",
      v -> (double) v >= 1);
  public static final String DRIFT_EXIT_RATIO = define("drift.exit.ratio", Type.DOUBLE, "1.2", ">= 1",
      "an active alert clears when its ratios are back within [1/x, x]", v -> (double) v >= 1);
  public static final String DRIFT_BUNDLE_EXIT = define("drift.bundle.exit.confidence", Type.DOUBLE, "0.90", "(0, 1]",
      "a new-bundle alert needs the reference period's smaller confidence below this, and clears when a recent one"
          + " falls below it", v -> (double) v > 0 && (double) v <= 1);
  public static final String DRIFT_DWELL = define("drift.min.dwell.ms", Type.LONG, "900000", ">= 0",
      "how long an entry (or exit) condition must hold before an alert is raised (or resolved)", v -> (long) v >= 0);
  public static final String DRIFT_COOLDOWN = define("drift.cooldown.ms", Type.LONG, "21600000", ">= 0",
      "quiet time after a resolved alert before the same pair and kind can alert again", v -> (long) v >= 0);
  public static final String DRIFT_REPORTED = define("drift.max.reported", Type.INT, "100", ">= 1",
      "entries per kind in a drift report", v -> (int) v >= 1);
  public static final String DRIFT_SHORT_HALF_LIVES = define("drift.short.half.lives.ms", Type.STRING,
      "3600000,7200000", "comma-separated half-lives > 0, distinct; empty: none",
      "half-lives of the short scales each pair is also tested at, derived from successive tables; empty: the recent"
          + " decay only", v -> halfLives((String) v) != null);
  public static final String KAFKA_BOOTSTRAP = define("alerts.kafka.bootstrap.servers", Type.STRING, "",
      "empty, or host:port[,host:port]", "Kafka cluster for the alerts topic; empty: no topic publishing", v -> true);
  public static final String KAFKA_TOPIC = define("alerts.kafka.topic", Type.STRING, "pairpulse.alerts",
      "a Kafka topic name", "topic that receives alert events as CloudEvents (structured JSON)",
      v -> ((String) v).matches("[a-zA-Z0-9._-]{1,249}"));
  public static final String WEBHOOK_URL = define("alerts.webhook.url", Type.STRING, "", "empty, or an http(s) URL",
      "URL that receives each alert event as a CloudEvents JSON POST; empty: no webhook",
      v -> ((String) v).isEmpty() || ((String) v).matches("https?://.+"));
  public static final String WEBHOOK_ATTEMPTS = define("alerts.webhook.max.attempts", Type.INT, "6", "1..20",
      "attempts per event, the first included", v -> (int) v >= 1 && (int) v <= 20);
  public static final String WEBHOOK_BACKOFF = define("alerts.webhook.initial.backoff.ms", Type.LONG, "500", ">= 1",
      "wait before the first retry; doubles each retry", v -> (long) v >= 1);
  public static final String WEBHOOK_MAX_BACKOFF = define("alerts.webhook.max.backoff.ms", Type.LONG, "30000",
      ">= alerts.webhook.initial.backoff.ms", "longest wait between retries", v -> (long) v >= 1);
  public static final String WEBHOOK_TIMEOUT = define("alerts.webhook.timeout.ms", Type.LONG, "5000", ">= 1",
      "connect and response timeout of one attempt", v -> (long) v >= 1);
  public static final String WEBHOOK_QUEUE = define("alerts.webhook.max.pending", Type.INT, "1000", ">= 1",
      "events waiting for delivery or retry; beyond this new events are dropped and counted", v -> (int) v >= 1);

  /** Earlier spellings of these keys, each to its key (readers accept them with a deprecation warning). */
  public static final Map<String, String> RENAMED = Map.ofEntries(
      Map.entry("serve.corsOrigins", "serve.cors.origins"),
      Map.entry("serve.maxBodyBytes", "serve.max.body.bytes"),
      Map.entry("serve.maxBasketItems", "serve.max.basket.items"),
      Map.entry("serve.maxIdLength", "serve.max.id.chars"),
      Map.entry("serve.maxCount", "serve.max.count"),
      Map.entry("serve.cohortFloor", "serve.cohort.floor"),
      Map.entry("serve.defaultHorizon", "serve.default.horizon"),
      Map.entry("serve.cacheEntries", "serve.cache.entries"),
      Map.entry("serve.maxNeighboursPerItem", "serve.max.neighbours.per.item"),
      Map.entry("serve.watchMillis", "serve.watch.ms"),
      Map.entry("serve.trend.pairsPerPoint", "serve.trend.pairs.per.point"),
      Map.entry("serve.trend.itemsPerPoint", "serve.trend.items.per.point"),
      Map.entry("drift.enterRootG2", "drift.enter.root.g2"),
      Map.entry("drift.exitRootG2", "drift.exit.root.g2"),
      Map.entry("drift.enterRatio", "drift.enter.ratio"),
      Map.entry("drift.exitRatio", "drift.exit.ratio"),
      Map.entry("drift.bundleExitConfidence", "drift.bundle.exit.confidence"),
      Map.entry("drift.minDwellMillis", "drift.min.dwell.ms"),
      Map.entry("drift.cooldownMillis", "drift.cooldown.ms"),
      Map.entry("drift.maxReported", "drift.max.reported"),
      Map.entry("drift.shortHalfLivesMillis", "drift.short.half.lives.ms"),
      Map.entry("alerts.kafka.bootstrapServers", "alerts.kafka.bootstrap.servers"),
      Map.entry("alerts.webhook.maxAttempts", "alerts.webhook.max.attempts"),
      Map.entry("alerts.webhook.initialBackoffMillis", "alerts.webhook.initial.backoff.ms"),
      Map.entry("alerts.webhook.maxBackoffMillis", "alerts.webhook.max.backoff.ms"),
      Map.entry("alerts.webhook.timeoutMillis", "alerts.webhook.timeout.ms"),
      Map.entry("alerts.webhook.maxPending", "alerts.webhook.max.pending"));

  private static String define(String name, Type type, String defaultValue, String rule, String doc,
      Predicate<Object> valid) {
    DEFINITION.define(name, type, defaultValue, LambdaValidator.with((key, value) -> {
      if (value instanceof Double d && Double.isNaN(d) || !valid.test(value)) {
        throw new ConfigException(key, value, "must be " + rule);
      }
    }, () -> rule), Importance.MEDIUM, doc);
    return name;
  }

  private ServeConfig(Map<String, String> values) {
    super(DEFINITION, values, false);
    driftSettings(); // rules between keys
    if (longValue(WEBHOOK_MAX_BACKOFF) < longValue(WEBHOOK_BACKOFF)) {
      throw new IllegalArgumentException(WEBHOOK_MAX_BACKOFF + " must be >= " + WEBHOOK_BACKOFF);
    }
  }

  /** All defaults. */
  public static ServeConfig defaults() {
    return from(Map.of());
  }

  /**
   * The defaults overridden by {@code overrides}.
   *
   * @throws IllegalArgumentException naming the key, for an unknown key or an invalid value
   */
  public static ServeConfig from(Map<String, String> overrides) {
    for (String name : overrides.keySet()) {
      if (!DEFINITION.names().contains(name)) {
        throw new IllegalArgumentException("unknown serve setting '" + name + "'");
      }
    }
    try {
      return new ServeConfig(overrides);
    } catch (ConfigException e) {
      throw new IllegalArgumentException(e.getMessage(), e);
    }
  }

  /** A copy with {@code key} set to {@code value} (its text form). */
  public ServeConfig with(String key, Object value) {
    Map<String, String> text = new LinkedHashMap<>();
    originals().forEach((k, v) -> text.put(k, String.valueOf(v)));
    text.put(key, String.valueOf(value));
    return from(text);
  }

  public String string(String key) {
    return getString(known(key));
  }

  public int intValue(String key) {
    return getInt(known(key));
  }

  public long longValue(String key) {
    return getLong(known(key));
  }

  public double doubleValue(String key) {
    return getDouble(known(key));
  }

  private static String known(String key) {
    if (!DEFINITION.names().contains(key)) {
      throw new IllegalArgumentException("unknown serve setting '" + key + "'");
    }
    return key;
  }

  /** The bearer token, if one is set. */
  public Optional<String> token() {
    String token = string(TOKEN);
    return token.isEmpty() ? Optional.empty() : Optional.of(token);
  }

  /** The half-lives of a comma-separated list (empty: none), or null when one is not a distinct long > 0. */
  static List<Long> halfLives(String text) {
    List<Long> out = new ArrayList<>();
    for (String part : text.split(",")) {
      if (part.isBlank()) {
        continue;
      }
      try {
        long value = Long.parseLong(part.strip());
        if (value <= 0 || out.contains(value)) {
          return null;
        }
        out.add(value);
      } catch (NumberFormatException e) {
        return null;
      }
    }
    return List.copyOf(out);
  }

  /** Drift thresholds from the drift.* keys. */
  public DriftSettings driftSettings() {
    return new DriftSettings("recent", DriftSettings.REFERENCE_HORIZON, doubleValue(DRIFT_ENTER_ROOT_G2), doubleValue(DRIFT_EXIT_ROOT_G2),
        doubleValue(DRIFT_ENTER_RATIO), doubleValue(DRIFT_EXIT_RATIO), doubleValue(DRIFT_BUNDLE_EXIT),
        longValue(DRIFT_DWELL), longValue(DRIFT_COOLDOWN), intValue(DRIFT_REPORTED), halfLives(string(DRIFT_SHORT_HALF_LIVES)));
  }

  public Duration watchInterval() {
    return Duration.ofMillis(longValue(WATCH_MILLIS));
  }

  /** Every value as text, in documentation order (for the status endpoint: the token is masked). */
  public Map<String, String> describe() {
    Map<String, String> text = new LinkedHashMap<>();
    for (String key : DEFINITION.names()) {
      Object value = get(key);
      text.put(key, key.equals(TOKEN) && !((String) value).isEmpty() ? "(set)" : String.valueOf(value));
    }
    return text;
  }
}
