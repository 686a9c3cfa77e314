package org.pairpulse.ingest.testkit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.Set;
import java.util.TreeMap;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.header.Header;
import org.apache.kafka.common.header.internals.RecordHeader;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.fixtures.ZipfSampler;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;

/**
 * A seeded stream of input records with its answers known in advance: the exact counts (the oracle: a
 * plain recount of the baskets that must be counted), the dead letters per reason and the duplicates.
 *
 * <p>Mixes whole baskets (plain JSON, CloudEvents structured and binary), baskets sent as line items
 * (closed by an end marker, or by the inactivity gap early in the stream), re-delivered baskets, late
 * baskets and poison records of every reason. Event times advance about 2 s per basket from
 * {@code now − 4 h}, so everything fits in the test engine's 24 h window.
 *
 * <p>Whole baskets carry attributes about half the time: {@code region} (north, south, east) and {@code plan}
 * (prepaid, postpaid). The oracle of each segment {@code region=<value>} ({@link #SEGMENT_ATTRIBUTE}) is a
 * plain recount of the baskets that carry that value; baskets assembled from line items carry none.
 */
public final class Workload {
  /** Test settings that make the answers exact (see {@link #engineConfig()}). */
  public static final long ALLOWED_LATENESS_MS = Duration.ofMinutes(10).toMillis();
  public static final long LINE_GAP_MS = Duration.ofMinutes(1).toMillis();
  public static final int MAX_BASKET_ITEMS = 20;
  /** The attribute the tests count segments by ({@code segments.attributes}). */
  public static final String SEGMENT_ATTRIBUTE = "region";
  private static final String[] REGIONS = {"north", "south", "east"};
  private static final String[] PLANS = {"prepaid", "postpaid"};

  /** The window the tests check: the test engine's {@code day} (every basket of a workload lies inside it). */
  static final HorizonSpec DAY = HorizonSpec.window("day", Duration.ofHours(24), 24);

  /** Exact counts of a set of baskets, N, n_a, n_ab: the shared oracle over the window {@code day}. */
  public static final class Counts {
    public long baskets;
    private final ExactCounts exact = new ExactCounts(List.of(DAY));

    void count(long eventMillis, List<String> items) {
      baskets++;
      exact.add(eventMillis, items);
    }

    /** Checks that {@code engine} holds exactly these counts in the window horizon "day". */
    public void assertExact(PairEngine engine, String what) {
      assertEquals(baskets, engine.stats().baskets(), what + ": baskets counted (EngineStats) vs the recount of the input");
      assertEquals(baskets, exact.baskets(DAY.name()), 0.0, what + ": every basket lies inside the window");
      assertEquals(baskets, engine.basketCount("day"), 0.0, what + ": N of window 'day' vs the recount");
      for (Map.Entry<String, Double> e : new TreeMap<>(exact.itemCountsByName(DAY.name())).entrySet()) {
        Estimate count = engine.itemCount(e.getKey(), "day");
        assertTrue(count.isExact(), what + ": item " + e.getKey() + " should be counted exactly: " + count);
        assertEquals(e.getValue(), count.value(), 0.0, what + ": n_a of " + e.getKey());
      }
      for (Map.Entry<String, Double> e : new TreeMap<>(exact.pairCountsByName(DAY.name())).entrySet()) {
        String[] ab = ExactCounts.splitPairName(e.getKey());
        Estimate count = engine.pairCount(ab[0], ab[1], "day");
        assertTrue(count.isExact(), what + ": pair " + e.getKey() + " should be counted exactly: " + count);
        assertEquals(e.getValue(), count.value(), 0.0, what + ": n_ab of " + e.getKey());
      }
    }

    Set<String> items() {
      return exact.itemCountsByName(DAY.name()).keySet();
    }
  }

  /** One record to produce. */
  public record Rec(String key, byte[] value, List<Header> headers) {}

  public final List<Rec> records = new ArrayList<>();
  /** The oracle of every basket that must be counted (segment all). */
  private final Counts all = new Counts();
  public final Map<DeadLetterReason, Long> deadLetters = new EnumMap<>(DeadLetterReason.class);
  public long baskets;
  public long duplicates;
  /** The oracle of each segment {@code region=<value>}, by segment name. */
  public final Map<String, Counts> segments = new TreeMap<>();

  private final Random random;
  private final String[] catalog;
  /** Zipf's law with exponent 0.5 (the shared sampler): the skew of the square of a uniform number, p(i) ∝ i^−½. */
  private final ZipfSampler popularity;
  private final List<Rec> recentBaskets = new ArrayList<>();
  private String attributes; // of the basket being encoded, or null

  private Workload(long seed, int catalogSize) {
    this.random = new Random(seed);
    this.catalog = BasketStream.numbered("item-", catalogSize);
    this.popularity = new ZipfSampler(catalogSize, 0.5);
  }

  /** The engine configuration the tests use: small sketches, tables larger than the catalog's pairs. */
  public static EngineConfig engineConfig() {
    return EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("recent", Duration.ofHours(6)), DAY))
        .trackingHorizon("recent")
        .itemError(0.01, 0.05).pairError(0.01, 0.05)
        .trackedItemCapacity(256).trackedPairCapacity(4096)
        .build();
  }

  /** {@code count} baskets (plus the injected extra records) with the given seed. */
  public static Workload generate(long seed, int count) {
    Workload w = new Workload(seed, 50);
    long t0 = System.currentTimeMillis() - Duration.ofHours(4).toMillis();
    for (int i = 0; i < count; i++) {
      long time = t0 + i * 2000L + w.random.nextInt(1000);
      String id = "b-" + seed + "-" + i;
      List<String> items = w.basketItems();
      double pick = w.random.nextDouble();
      if (pick < 0.15) {
        boolean withEnd = i > count * 0.6 || w.random.nextBoolean();
        w.lineItems(id, time, items, withEnd);
      } else {
        String attributes = null;
        if (w.random.nextBoolean()) {
          String region = REGIONS[w.random.nextInt(REGIONS.length)];
          attributes = "{\"" + SEGMENT_ATTRIBUTE + "\":\"" + region + "\",\"plan\":\"" + PLANS[w.random.nextInt(PLANS.length)]
              + "\"}";
          w.segments.computeIfAbsent(SEGMENT_ATTRIBUTE + "=" + region, k -> new Counts()).count(time, items);
        }
        w.attributes = attributes;
        Rec rec = pick < 0.55 ? w.plain(id, time, items) : pick < 0.8 ? w.structured(id, time, items) : w.binary(id, time, items);
        w.attributes = null;
        w.records.add(rec);
        w.recentBaskets.add(rec);
        if (w.recentBaskets.size() > 20) {
          w.recentBaskets.remove(0);
        }
      }
      w.count(time, items);
      double extra = w.random.nextDouble();
      if (extra < 0.03 && !w.recentBaskets.isEmpty()) {
        w.records.add(w.recentBaskets.get(w.random.nextInt(w.recentBaskets.size())));
        w.duplicates++;
      } else if (extra < 0.05) {
        w.poison(i, time);
      } else if (extra < 0.06 && i > count / 2) {
        w.records.add(w.plain("late-" + seed + "-" + i, time - Duration.ofHours(1).toMillis(), w.basketItems()));
        w.deadLetters.merge(DeadLetterReason.LATE, 1L, Long::sum);
      }
    }
    return w;
  }

  private List<String> basketItems() {
    int size = 1 + random.nextInt(5);
    List<String> items = new ArrayList<>();
    for (int k = 0; k < size; k++) {
      items.add(catalog[popularity.sample(random.nextDouble())]); // skewed: low ids are frequent
    }
    if (random.nextInt(20) == 0) {
      items.add(items.get(0)); // a repeated item counts once
    }
    return items;
  }

  private void count(long time, List<String> items) {
    all.count(time, items);
    baskets = all.baskets;
  }

  // ---------------------------------------------------------------- encodings

  static String itemsJson(List<String> items, Random random) {
    StringBuilder out = new StringBuilder("[");
    for (int k = 0; k < items.size(); k++) {
      if (k > 0) {
        out.append(',');
      }
      if (random.nextInt(4) == 0) {
        out.append("{\"id\":\"").append(items.get(k)).append("\",\"qty\":").append(1 + random.nextInt(3)).append('}');
      } else {
        out.append('"').append(items.get(k)).append('"');
      }
    }
    return out.append(']').toString();
  }

  private String basketData(String id, Long time, List<String> items) {
    StringBuilder out = new StringBuilder("{\"id\":\"").append(id).append('"');
    if (time != null) {
      out.append(",\"time\":").append(random.nextBoolean() ? time.toString() : "\"" + Instant.ofEpochMilli(time) + "\"");
    }
    out.append(",\"items\":").append(itemsJson(items, random));
    if (attributes != null) {
      out.append(",\"attributes\":").append(attributes);
      if (random.nextInt(3) == 0) {
        out.append(",\"channel\":{\"app\":[1,2.5e3,true,null]}"); // an unknown field, skipped
      }
    }
    return out.append('}').toString();
  }

  private Rec plain(String id, long time, List<String> items) {
    return new Rec(id, utf8(basketData(id, time, items)), List.of());
  }

  private Rec structured(String id, long time, List<String> items) {
    String data = basketData(id, random.nextBoolean() ? time : null, items);
    String envelope = "{\"specversion\":\"1.0\",\"id\":\"ev-" + id + "\",\"source\":\"/test/shop\",\"type\":\"org.pairpulse.basket.v1\","
        + "\"time\":\"" + Instant.ofEpochMilli(time) + "\",\"datacontenttype\":\"application/json\",\"data\":" + data + "}";
    return new Rec(id, utf8(envelope), List.of(header("content-type", "application/cloudevents+json; charset=UTF-8")));
  }

  private Rec binary(String id, long time, List<String> items) {
    String data = basketData(id, random.nextBoolean() ? time : null, items);
    return new Rec(id, utf8(data), List.of(header("ce_specversion", "1.0"), header("ce_id", "ev-" + id),
        header("ce_source", "/test/shop"), header("ce_type", "org.pairpulse.basket.v1"),
        header("ce_time", Instant.ofEpochMilli(time).toString()), header("content-type", "application/json")));
  }

  private void lineItems(String id, long time, List<String> items, boolean withEnd) {
    long last = time - (items.size() - 1) * 100L;
    for (int k = 0; k < items.size(); k++) {
      long lineTime = time - (items.size() - 1 - k) * 100L;
      last = lineTime;
      String json = "{\"basket\":\"" + id + "\",\"time\":" + lineTime + ",\"item\":\"" + items.get(k) + "\""
          + (random.nextBoolean() ? ",\"qty\":2" : "") + "}";
      records.add(new Rec(id, utf8(json), List.of()));
    }
    if (withEnd) {
      records.add(new Rec(id, utf8("{\"basket\":\"" + id + "\",\"time\":" + last + ",\"end\":true}"), List.of()));
    }
  }

  private void poison(int i, long time) {
    DeadLetterReason[] kinds = {DeadLetterReason.MALFORMED, DeadLetterReason.MISSING_FIELD, DeadLetterReason.WRONG_TYPE,
        DeadLetterReason.EMPTY_BASKET, DeadLetterReason.OVERSIZED_BASKET, DeadLetterReason.ID_TOO_LONG,
        DeadLetterReason.TIME_IN_FUTURE, DeadLetterReason.TIME_TOO_OLD, DeadLetterReason.UNSUPPORTED_EVENT};
    DeadLetterReason reason = kinds[random.nextInt(kinds.length)];
    String id = "poison-" + i;
    String json;
    List<Header> headers = List.of(header("origin", "test-" + i));
    switch (reason) {
      case MALFORMED -> json = random.nextBoolean() ? "{\"id\":\"" + id + "\",\"time\":" + time + ",\"items\":[\"a\"" : "not json at all";
      case MISSING_FIELD -> json = "{\"id\":\"" + id + "\",\"time\":" + time + "}";
      case WRONG_TYPE -> json = "{\"id\":\"" + id + "\",\"time\":true,\"items\":[\"a\"]}";
      case EMPTY_BASKET -> json = "{\"id\":\"" + id + "\",\"time\":" + time + ",\"items\":[]}";
      case OVERSIZED_BASKET -> {
        List<String> many = new ArrayList<>();
        for (int k = 0; k < MAX_BASKET_ITEMS + 5; k++) {
          many.add("x" + k);
        }
        json = "{\"id\":\"" + id + "\",\"time\":" + time + ",\"items\":" + itemsJson(many, random) + "}";
      }
      case ID_TOO_LONG -> json = "{\"id\":\"" + "x".repeat(300) + "\",\"time\":" + time + ",\"items\":[\"a\"]}";
      case TIME_IN_FUTURE -> json = "{\"id\":\"" + id + "\",\"time\":" + (System.currentTimeMillis() + Duration.ofDays(30).toMillis())
          + ",\"items\":[\"a\"]}";
      case TIME_TOO_OLD -> json = "{\"id\":\"" + id + "\",\"time\":1000,\"items\":[\"a\"]}";
      case UNSUPPORTED_EVENT -> json = "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/x\",\"type\":\"com.example.refund\","
          + "\"data\":{\"id\":\"" + id + "\",\"time\":" + time + ",\"items\":[\"a\"]}}";
      default -> throw new IllegalStateException();
    }
    records.add(new Rec(id, utf8(json), headers));
    deadLetters.merge(reason, 1L, Long::sum);
  }

  private static Header header(String key, String value) {
    return new RecordHeader(key, utf8(value));
  }

  private static byte[] utf8(String s) {
    return s.getBytes(StandardCharsets.UTF_8);
  }

  // ---------------------------------------------------------------- producing and checking

  /** Produces records [from, to) on a producer of its own, as {@link #produce(KafkaProducer, String, int, int)}. */
  public void produce(Broker broker, String topic, int from, int to) {
    try (KafkaProducer<byte[], byte[]> producer = broker.producer()) {
      produce(producer, topic, from, to);
    }
  }

  /** Produces records [from, to) keyed by basket id, and waits for the acknowledgements. */
  public void produce(KafkaProducer<byte[], byte[]> producer, String topic, int from, int to) {
    List<java.util.concurrent.Future<org.apache.kafka.clients.producer.RecordMetadata>> sent = new ArrayList<>();
    for (int i = from; i < to; i++) {
      Rec rec = records.get(i);
      sent.add(producer.send(new ProducerRecord<>(topic, null, rec.key().getBytes(StandardCharsets.UTF_8), rec.value(),
          new RecordHeaders(rec.headers().toArray(new Header[0])))));
    }
    producer.flush();
    for (java.util.concurrent.Future<org.apache.kafka.clients.producer.RecordMetadata> f : sent) {
      try {
        f.get();
      } catch (Exception e) {
        throw new IllegalStateException("the test input was not written completely: " + e, e);
      }
    }
  }

  public long deadLetterTotal() {
    return deadLetters.values().stream().mapToLong(Long::longValue).sum();
  }

  /**
   * Checks that {@code engines} (the merged segment engines, by name) hold exactly the oracle's counts of every
   * segment {@code region=<value>}, and no other segment.
   */
  public void assertExactSegments(Map<String, PairEngine> engines) {
    assertEquals(segments.keySet(), engines.keySet(), "segments counted vs the regions of the input");
    segments.forEach((name, counts) -> counts.assertExact(engines.get(name), "segment " + name));
  }

  /** Checks that {@code engine} holds exactly the oracle's counts in the window horizon "day". */
  public void assertExact(PairEngine engine) {
    all.assertExact(engine, "all");
  }

  /** Items of the catalog that occur in the oracle. */
  public Set<String> items() {
    return all.items();
  }
}
