package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.kafka.common.config.AbstractConfig;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.Range;
import org.apache.kafka.common.config.ConfigDef.Type;
import org.apache.kafka.common.config.ConfigDef.ValidString;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.sketch.time.EventClock;

/**
 * The ingest settings: each key has a type, a default, a validator and a one-line doc (Kafka's
 * {@link ConfigDef}). Keys that start with {@code kafka.} pass through to the Kafka clients:
 * {@code kafka.X} to every client, {@code kafka.consumer.X}, {@code kafka.producer.X} and
 * {@code kafka.admin.X} to one of them (so SASL/TLS settings and any tuning work unchanged).
 * README-ingest.md lists every key; a test keeps that list complete.
 *
 * <p>Segments ({@link SegmentSettings}): {@code segments.attributes} names the basket attributes whose values are
 * segments (e.g. {@code channel,region}); each basket counts in segment {@code all} and in
 * {@code <attribute>=<value>} for each of them it carries. {@code segments.max.values} bounds the segments of one
 * attribute per partition (further values count in {@code all} only, and are counted in the metric
 * {@code pairpulse.ingest.segment.skipped}); {@code segments.tracked.fraction} scales a segment engine's tracked
 * capacities. A partition holds at most {@code 1 + attributes × segments.max.values} engines.
 */
public final class IngestConfig extends AbstractConfig {
  public static final String BOOTSTRAP_SERVERS = "bootstrap.servers";
  public static final String TOPICS = "topics";
  public static final String GROUP_ID = "group.id";
  public static final String INSTANCE_ID = "instance.id";
  public static final String DEAD_LETTER_TOPIC = "dead.letter.topic";
  public static final String STATE_TOPIC = "state.topic";
  public static final String TOPICS_CREATE = "topics.create";
  public static final String CHECKPOINT_STORE = "checkpoint.store";
  public static final String CHECKPOINT_DIR = "checkpoint.dir";
  public static final String CHECKPOINT_INTERVAL_MS = "checkpoint.interval.ms";
  public static final String CHECKPOINT_INTERVAL_BASKETS = "checkpoint.interval.baskets";
  public static final String STATE_CHUNK_BYTES = "state.chunk.bytes";
  public static final String POLL_TIMEOUT_MS = "poll.timeout.ms";
  public static final String ENGINE_THREAD = "engine.thread";
  public static final String ENGINE_QUEUE_BATCHES = "engine.queue.batches";
  public static final String ENGINE_THREADS = "engine.threads";
  public static final String REFRESH_INTERVAL_MS = "refresh.interval.ms";
  public static final String GROUP_VIEW = "group.view";
  public static final String GROUP_VIEW_STALE_MS = "group.view.stale.ms";
  public static final String ALLOWED_LATENESS_MS = "allowed.lateness.ms";
  public static final String DEDUPE_HORIZON_MS = "dedupe.horizon.ms";
  public static final String DEDUPE_MAX_IDS = "dedupe.max.ids";
  public static final String LINE_GAP_MS = "line.gap.ms";
  public static final String LINE_MAX_AGE_MS = "line.max.age.ms";
  public static final String LINE_MAX_OPEN_BASKETS = "line.max.open.baskets";
  public static final String MAX_BASKET_ITEMS = "max.basket.items";
  public static final String MAX_ID_CHARS = "max.id.chars";
  public static final String MAX_FUTURE_MS = "max.future.ms";
  public static final String MAX_PAST_MS = "max.past.ms";
  public static final String SHUTDOWN_TIMEOUT_MS = "shutdown.timeout.ms";
  public static final String SEGMENT_ATTRIBUTES = "segments.attributes";
  public static final String SEGMENT_MAX_VALUES = "segments.max.values";
  public static final String SEGMENT_TRACKED_FRACTION = "segments.tracked.fraction";

  /** Prefix of the keys passed to the Kafka clients. */
  public static final String KAFKA_PREFIX = "kafka.";

  /** Where checkpoints go. */
  public enum Store {
    /** Group mode: a compacted state topic, written in one transaction with the consumer offsets. */
    KAFKA,
    /** Single node: files in {@code checkpoint.dir}, replaced by atomic rename. */
    LOCAL,
    /** No checkpoints and no offset commits (benchmarks, throw-away demos). */
    NONE
  }

  private static final long HOUR = Duration.ofHours(1).toMillis();

  public static final ConfigDef DEFINITION = new ConfigDef()
      .define(BOOTSTRAP_SERVERS, Type.LIST, ConfigDef.NO_DEFAULT_VALUE, new ConfigDef.NonEmptyString() {
        @Override
        public void ensureValid(String name, Object value) {
          if (value == null || ((List<?>) value).isEmpty()) {
            throw new ConfigException(name, value, "at least one host:port is needed");
          }
        }
      }, Importance.HIGH, "Kafka brokers to bootstrap from (host:port, comma-separated).")
      .define(TOPICS, Type.LIST, ConfigDef.NO_DEFAULT_VALUE, Importance.HIGH,
          "Input topics of basket and line-item events (comma-separated).")
      .define(GROUP_ID, Type.STRING, "pairpulse", new ConfigDef.NonEmptyString(), Importance.HIGH,
          "Consumer group; instances with the same group share the partitions.")
      .define(INSTANCE_ID, Type.STRING, "", Importance.MEDIUM,
          "Stable name of this instance (e.g. the host or pod name); names its transactional id, so a restarted "
              + "instance fences its crashed predecessor at once. Empty: a random one (recovery then waits for the "
              + "transaction timeout).")
      .define(DEAD_LETTER_TOPIC, Type.STRING, "pairpulse.dead-letters", new ConfigDef.NonEmptyString(), Importance.HIGH,
          "Topic that receives records that cannot be used, with their original bytes and headers plus reason headers.")
      .define(STATE_TOPIC, Type.STRING, "pairpulse.state", new ConfigDef.NonEmptyString(), Importance.MEDIUM,
          "Compacted topic holding the checkpoints in group mode (checkpoint.store=kafka).")
      .define(TOPICS_CREATE, Type.BOOLEAN, true, Importance.LOW,
          "Create the dead-letter and state topics at start when they are missing.")
      .define(CHECKPOINT_STORE, Type.STRING, "kafka", ValidString.in("kafka", "local", "none"), Importance.HIGH,
          "Where checkpoints go: kafka (state topic, exactly-once with the offsets), local (checkpoint.dir, single "
              + "node), none (no checkpoints, no commits).")
      .define(CHECKPOINT_DIR, Type.STRING, "pairpulse-checkpoints", Importance.MEDIUM,
          "Directory of local checkpoints (checkpoint.store=local).")
      .define(CHECKPOINT_INTERVAL_MS, Type.LONG, 30_000L, Range.atLeast(100), Importance.MEDIUM,
          "Take a checkpoint at least this often (wall-clock ms)...")
      .define(CHECKPOINT_INTERVAL_BASKETS, Type.LONG, 1_000_000L, Range.atLeast(1), Importance.MEDIUM,
          "... or after this many baskets, whichever comes first.")
      .define(STATE_CHUNK_BYTES, Type.INT, 0, Range.atLeast(0), Importance.LOW,
          "Largest chunk of a checkpoint in the state topic; 0: the topic's max.message.bytes (and the producer's "
              + "max.request.size) less 4 KiB of headroom.")
      .define(POLL_TIMEOUT_MS, Type.LONG, 100L, Range.between(1, 10_000), Importance.LOW,
          "Longest wait of one poll; bounds how quickly checkpoints, refreshes and shutdown are noticed.")
      .define(ENGINE_THREAD, Type.BOOLEAN, true, Importance.LOW,
          "Count baskets on a thread of their own (the poll loop decodes the next batch meanwhile).")
      .define(ENGINE_QUEUE_BATCHES, Type.INT, 8, Range.between(1, 1024), Importance.LOW,
          "Poll batches that may wait for the engine thread before the poll loop blocks (backpressure).")
      .define(ENGINE_THREADS, Type.INT, 1, Range.between(1, 64), Importance.MEDIUM,
          "Engine threads (lanes); partition p is counted by lane p mod engine.threads, each lane with its own queue "
              + "of engine.queue.batches. Ignored (one lane) when engine.thread=false.")
      .define(REFRESH_INTERVAL_MS, Type.LONG, 2_000L, Range.atLeast(0), Importance.MEDIUM,
          "Publish a pair table this often (the group view's in group mode, else this instance's partitions'); 0: never.")
      .define(GROUP_VIEW, Type.BOOLEAN, true, Importance.MEDIUM,
          "Group mode only: publish the whole group's pair table, this instance's partitions merged with the others' "
              + "newest checkpoints read from the state topic; false: this instance's partitions only.")
      .define(GROUP_VIEW_STALE_MS, Type.LONG, 0L, Range.atLeast(0), Importance.LOW,
          "A partition whose merged state does not reach the records it held this long ago (a remote checkpoint not "
              + "renewed, an owned partition catching up) marks the group view partial; 0: three times "
              + "checkpoint.interval.ms.")
      .define(ALLOWED_LATENESS_MS, Type.LONG, HOUR, Range.atLeast(0), Importance.HIGH,
          "Events older than their partition's newest event time minus this are dead letters (reason late).")
      .define(DEDUPE_HORIZON_MS, Type.LONG, HOUR, Range.atLeast(0), Importance.MEDIUM,
          "Remember basket ids for this much event time to drop re-deliveries; 0: no dedupe.")
      .define(DEDUPE_MAX_IDS, Type.INT, 100_000, Range.atLeast(0), Importance.LOW,
          "Most basket ids remembered per partition (a memory cap on the dedupe horizon).")
      .define(LINE_GAP_MS, Type.LONG, Duration.ofMinutes(30).toMillis(), Range.atLeast(0), Importance.MEDIUM,
          "A basket assembled from line items closes this long (event time) after its last line, once the watermark passes.")
      .define(LINE_MAX_AGE_MS, Type.LONG, Duration.ofHours(24).toMillis(), Range.atLeast(0), Importance.MEDIUM,
          "... or this long after its first line, whichever comes first.")
      .define(LINE_MAX_OPEN_BASKETS, Type.INT, 100_000, Range.atLeast(1), Importance.LOW,
          "Most baskets being assembled per partition; beyond it the one nearest its deadline closes early.")
      .define(MAX_BASKET_ITEMS, Type.INT, EventLimits.DEFAULT_MAX_BASKET_ITEMS, Range.atLeast(1), Importance.MEDIUM,
          "Most items in one basket; larger baskets are dead letters (reason oversized_basket).")
      .define(MAX_ID_CHARS, Type.INT, EventLimits.DEFAULT_MAX_ID_CHARS, Range.atLeast(1), Importance.LOW,
          "Longest basket id, item id or attribute (chars); longer ones are dead letters (reason id_too_long).")
      .define(MAX_FUTURE_MS, Type.LONG, EventLimits.DEFAULT_MAX_FUTURE_MILLIS, Range.atLeast(0), Importance.LOW,
          "Event times further ahead of the wall clock are dead letters (reason time_in_future).")
      .define(MAX_PAST_MS, Type.LONG, EventLimits.DEFAULT_MAX_PAST_MILLIS, Range.atLeast(0), Importance.LOW,
          "Event times further behind the wall clock are dead letters (reason time_too_old).")
      .define(SHUTDOWN_TIMEOUT_MS, Type.LONG, 30_000L, Range.atLeast(0), Importance.LOW,
          "Longest wait for the final checkpoint and commit on shutdown.")
      .define(SEGMENT_ATTRIBUTES, Type.LIST, "", new AttributeNames(), Importance.MEDIUM,
          "Basket attributes whose values are segments (e.g. channel,region): a basket also counts in segment "
              + "<attribute>=<value> for each it carries. Empty: segment all only; no other segment exists.")
      .define(SEGMENT_MAX_VALUES, Type.INT, SegmentSettings.DEFAULT_MAX_VALUES, Range.between(1, 1024), Importance.MEDIUM,
          "Most segments of one attribute per partition (each is an engine); baskets with further values count in all "
              + "only (metric pairpulse.ingest.segment.skipped).")
      .define(SEGMENT_TRACKED_FRACTION, Type.DOUBLE, SegmentSettings.DEFAULT_TRACKED_FRACTION, new Fraction(),
          Importance.LOW, "Tracked pair and item capacities of a segment engine, as a fraction of the all engine's "
              + "(at least " + SegmentSettings.MIN_TRACKED + ").");

  /** Validates {@code segments.attributes}: plain, distinct names. */
  private static final class AttributeNames implements ConfigDef.Validator {
    @Override
    public void ensureValid(String name, Object value) {
      List<?> list = (List<?>) value;
      java.util.Set<Object> seen = new java.util.HashSet<>();
      for (Object attribute : list) {
        if (!SegmentSettings.ATTRIBUTE.matcher(attribute.toString()).matches()) {
          throw new ConfigException(name, value, "'" + attribute + "' is not an attribute name (a letter or digit, then"
              + " letters, digits, '_', '.', '-'; at most 32 characters)");
        }
        if (!seen.add(attribute)) {
          throw new ConfigException(name, value, "'" + attribute + "' is named twice");
        }
      }
    }

    @Override
    public String toString() {
      return "comma-separated attribute names, each [A-Za-z0-9][A-Za-z0-9_.-]{0,31}";
    }
  }

  /** Validates {@code segments.tracked.fraction}: in (0, 1]. */
  private static final class Fraction implements ConfigDef.Validator {
    @Override
    public void ensureValid(String name, Object value) {
      double v = ((Number) value).doubleValue();
      if (!(v > 0 && v <= 1)) {
        throw new ConfigException(name, value, "must be in (0, 1]");
      }
    }

    @Override
    public String toString() {
      return "(0, 1]";
    }
  }

  public IngestConfig(Map<String, ?> props) {
    super(DEFINITION, props, false);
    if (store() == Store.KAFKA) {
      long txTimeout = transactionTimeoutMs();
      if (getLong(CHECKPOINT_INTERVAL_MS) >= txTimeout) {
        throw new ConfigException(CHECKPOINT_INTERVAL_MS, getLong(CHECKPOINT_INTERVAL_MS),
            "must be shorter than the producer's transaction.timeout.ms (" + txTimeout + "): a checkpoint closes the transaction");
      }
    }
  }

  /** The producer's {@code transaction.timeout.ms} (Kafka's default: 60 s unless passed through). */
  long transactionTimeoutMs() {
    return longOf(producerOverrides().get("transaction.timeout.ms"), 60_000L);
  }

  private static long longOf(Object value, long fallback) {
    return value == null ? fallback : Long.parseLong(value.toString());
  }

  public List<String> bootstrapServers() {
    return getList(BOOTSTRAP_SERVERS);
  }

  public List<String> topics() {
    return getList(TOPICS);
  }

  public String groupId() {
    return getString(GROUP_ID);
  }

  public Store store() {
    return Store.valueOf(getString(CHECKPOINT_STORE).toUpperCase(Locale.ROOT));
  }

  /** True when group mode publishes the whole group's table ({@code checkpoint.store=kafka} with {@code group.view}). */
  public boolean groupViewEnabled() {
    return store() == Store.KAFKA && getBoolean(GROUP_VIEW);
  }

  /** {@code group.view.stale.ms}, its 0 resolved to three times {@code checkpoint.interval.ms}. */
  long groupViewStaleMs() {
    long stale = getLong(GROUP_VIEW_STALE_MS);
    return stale > 0 ? stale : 3 * getLong(CHECKPOINT_INTERVAL_MS);
  }

  /** Limits of the decoder against {@code clock}. */
  public EventLimits eventLimits(EventClock clock) {
    return new EventLimits(getInt(MAX_BASKET_ITEMS), getInt(MAX_ID_CHARS), getLong(MAX_FUTURE_MS), getLong(MAX_PAST_MS),
        EventLimits.DEFAULT_MAX_ATTRIBUTES, clock);
  }

  /** Settings of the partition fronts. */
  public FrontSettings frontSettings() {
    return new FrontSettings(getLong(ALLOWED_LATENESS_MS), getLong(DEDUPE_HORIZON_MS), getInt(DEDUPE_MAX_IDS),
        getLong(LINE_GAP_MS), getLong(LINE_MAX_AGE_MS), getInt(LINE_MAX_OPEN_BASKETS), getInt(MAX_BASKET_ITEMS));
  }

  /** The segment settings ({@code segments.*}). */
  public SegmentSettings segmentSettings() {
    return new SegmentSettings(getList(SEGMENT_ATTRIBUTES), getInt(SEGMENT_MAX_VALUES), getDouble(SEGMENT_TRACKED_FRACTION));
  }

  /** Pass-through settings for one client kind: {@code kafka.X} then {@code kafka.<kind>.X} (which wins). */
  Map<String, Object> clientOverrides(String kind) {
    Map<String, Object> common = new HashMap<>();
    Map<String, Object> specific = new HashMap<>();
    for (Map.Entry<String, Object> e : originalsWithPrefix(KAFKA_PREFIX).entrySet()) {
      String key = e.getKey();
      if (key.startsWith("consumer.") || key.startsWith("producer.") || key.startsWith("admin.")) {
        if (key.startsWith(kind + ".")) {
          specific.put(key.substring(kind.length() + 1), e.getValue());
        }
      } else {
        common.put(key, e.getValue());
      }
    }
    common.putAll(specific);
    return common;
  }

  Map<String, Object> producerOverrides() {
    return clientOverrides("producer");
  }

  /** Every key with its default, for the docs. */
  public static Map<String, Object> defaults() {
    Map<String, Object> out = new HashMap<>();
    DEFINITION.configKeys().forEach((name, key) -> out.put(name, key.defaultValue));
    return out;
  }
}
