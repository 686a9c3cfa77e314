package org.pairpulse.ops.product.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.TreeMap;
import java.util.concurrent.TimeUnit;
import java.util.function.BooleanSupplier;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ops.product.run.RunConfig;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * Segments through the real pipeline ({@code pairpulse run}'s configuration, the in-process broker, ingest and the
 * server over HTTP), with {@code segments.attributes=channel} and a cohort floor of 50 distinct baskets:
 * <ul>
 *   <li>{@code channel=app} (240 baskets) is served: its N and its pair counts equal a plain recount of the app
 *       baskets (the oracle), which differ from segment {@code all}'s;</li>
 *   <li>{@code channel=store} (30 baskets, under the floor) is counted by ingest but never named by the server:
 *       not in the status's segment list, a 404 for {@code segment=channel=store};</li>
 *   <li>a value that is not a plain name counts in {@code all} only and in the skipped-values metric;</li>
 *   <li>the local checkpoints hold both segments, and a restart serves {@code channel=app} again from them.</li>
 * </ul>
 */
class SegmentPipelineTest {
  private static final ObjectMapper JSON = new ObjectMapper();
  private static final String TOPIC = "shop.baskets";

  @TempDir
  Path dir;

  /** One basket to send and to recount. */
  record Sent(String id, List<String> items, String channel) {}

  @Test
  void segmentsAreCountedPerAttributeValueAndServedOnlyAboveTheCohortFloor() throws Exception {
    List<Sent> baskets = baskets(new Random(5));
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      broker.createTopic(TOPIC, 2);
      Path checkpoints = dir.resolve("checkpoints");
      Path file = dir.resolve("pairpulse.properties");
      Files.writeString(file, String.join("\n",
          "bootstrap.servers=" + broker.bootstrapServers(),
          "topics=" + TOPIC,
          "group.id=segment-test",
          "instance.id=segment-test-1",
          "checkpoint.store=local",
          "checkpoint.dir=" + checkpoints,
          "refresh.interval.ms=200",
          "serve.port=0",
          "serve.cohort.floor=50",
          "alerts.kafka.enabled=false",
          "segments.attributes=channel",
          "segments.max.values=4",
          "run.sketch.health.interval.ms=1000", ""), StandardCharsets.UTF_8);
      Pipeline.Settings settings = RunConfig.load(file).pipelineSettings();
      assertEquals(List.of("channel"), settings.segmentAttributes());
      Map<String, Long> appPairs = pairCounts(baskets, "app");
      long appBaskets = baskets.stream().filter(b -> "app".equals(b.channel())).count();
      long storeBaskets = baskets.stream().filter(b -> "store".equals(b.channel())).count();
      try (Pipeline pipeline = Pipeline.start(settings)) {
        produce(broker.bootstrapServers(), baskets);
        HttpClient http = HttpClient.newHttpClient();
        URI base = pipeline.server().uri();
        await("every basket in a table of 'all' and the segment channel=app served", () -> {
          pipeline.server().catchUp();
          return pipeline.server().view("all").baskets("day") == baskets.size()
              && pipeline.server().segmentNames().contains("channel=app")
              && pipeline.server().view("channel=app").baskets("day") == appBaskets;
        });

        JsonNode status = get(http, base, "/api/v1/status");
        assertEquals(List.of("all", "channel=app"), names(status.path("segments")),
            "channel=store has fewer baskets than the floor: not even named; 'Web Shop' is not a plain value");
        JsonNode app = get(http, base, "/api/v1/status?segment=" + URLEncoder.encode("channel=app", StandardCharsets.UTF_8));
        assertEquals("channel=app", app.path("segment").asText());
        assertEquals(appBaskets, app.path("table").path("horizons").path(1).path("baskets").asLong(), app.toString());
        assertEquals(404, status(http, base.resolve("/api/v1/status?segment=channel%3Dstore")));
        assertEquals(404, status(http, base.resolve("/api/v1/rules?item=fibre-1g&segment=channel%3Dstore")));

        // the segment's pair counts are the app baskets' (the recount), not all's
        JsonNode rules = get(http, base, "/api/v1/rules?item=fibre-1g&horizon=day&segment=channel%3Dapp");
        assertTrue(rules.path("outgoing").size() > 0, rules.toString());
        for (JsonNode rule : rules.path("outgoing")) {
          String key = key("fibre-1g", rule.path("consequent").asText());
          assertEquals(appPairs.get(key), rule.path("pairBaskets").asLong(), 0.0, "n_ab of " + key + " in channel=app");
          assertTrue(appPairs.get(key) >= 50, "served pairs pass the floor: " + key);
        }
        for (PairStats pair : pipeline.server().view("channel=app").pairs("day")) {
          String key = key(pair.itemA(), pair.itemB());
          assertEquals(appPairs.get(key), pair.counts().countAB().value(), 0.0, "n_ab of " + key);
        }
        // ingest counts the small segment; only the server keeps it out of sight
        PairTable store = pipeline.ingestor().segmentTables().get("channel=store").current();
        assertEquals(storeBaskets, store.horizon("day").orElseThrow().baskets(), 0.0);
        assertEquals(baskets.size(), pipeline.ingestor().metrics().basketCount(), 0.0);
        assertEquals(5, pipeline.ingestor().metrics().segmentSkippedCount("channel", "invalid_value"), 0.0);
        String metrics = http.send(HttpRequest.newBuilder(base.resolve("/metrics")).build(),
            HttpResponse.BodyHandlers.ofString()).body();
        assertTrue(metrics.contains("pairpulse_ingest_segment_skipped_total{attribute=\"channel\",reason=\"invalid_value\"} 5.0"),
            metrics.lines().filter(l -> l.contains("segment")).toList().toString());
        assertTrue(metrics.contains("pairpulse_pair_table_version{segment=\"channel=app\"}"), "per-segment meters");
        assertTrue(!metrics.contains("segment=\"channel=store\""), "no meter names the segment under the floor");
      }

      // the checkpoints hold every segment of their partition, and a restart serves them again
      LocalDirectoryStore local = new LocalDirectoryStore(checkpoints);
      LinkedHashSet<String> checkpointed = new LinkedHashSet<>();
      for (int p = 0; p < 2; p++) {
        PartitionCheckpoint cp = local.load(TOPIC, p).orElseThrow();
        checkpointed.addAll(cp.segments().keySet());
      }
      assertEquals(new LinkedHashSet<>(List.of("channel=app", "channel=store")), checkpointed);
      try (Pipeline restarted = Pipeline.start(RunConfig.load(file).pipelineSettings())) {
        await("channel=app served again from the checkpoints", () -> {
          restarted.server().catchUp();
          return restarted.server().segmentNames().contains("channel=app")
              && restarted.server().view("channel=app").baskets("day") == appBaskets;
        });
        assertEquals(baskets.size(), restarted.server().view("all").baskets("day"), 0.0);
        assertEquals(0, restarted.ingestor().metrics().basketCount(), 0.0, "nothing was read again");
      }
    }
  }

  /**
   * 240 app baskets (fibre with its router most of the time), 30 store baskets (a handset and its case, and
   * fibre with the router), 5 with channel "Web Shop" and 60 without attributes (TV plans).
   */
  static List<Sent> baskets(Random random) {
    List<Sent> out = new ArrayList<>();
    for (int i = 0; i < 240; i++) {
      List<String> items = new ArrayList<>(List.of("fibre-1g"));
      if (random.nextInt(10) < 8) {
        items.add("router-rental");
      }
      items.add("extra-" + random.nextInt(3));
      out.add(new Sent("app-" + i, items, "app"));
    }
    for (int i = 0; i < 30; i++) {
      out.add(new Sent("store-" + i, i % 2 == 0 ? List.of("handset-x", "case-x") : List.of("fibre-1g", "router-rental"),
          "store"));
    }
    for (int i = 0; i < 5; i++) {
      out.add(new Sent("web-" + i, List.of("fibre-1g", "router-rental"), "Web Shop"));
    }
    for (int i = 0; i < 60; i++) {
      out.add(new Sent("none-" + i, List.of("tv-basic", "extra-" + random.nextInt(3)), null));
    }
    java.util.Collections.shuffle(out, random);
    return out;
  }

  /** The oracle: n_ab of every pair among the baskets of {@code channel}, by a plain recount. */
  static Map<String, Long> pairCounts(List<Sent> baskets, String channel) {
    Map<String, Long> out = new TreeMap<>();
    for (Sent b : baskets) {
      if (!channel.equals(b.channel())) {
        continue;
      }
      List<String> items = new ArrayList<>(new LinkedHashSet<>(b.items()));
      for (int x = 0; x < items.size(); x++) {
        for (int y = x + 1; y < items.size(); y++) {
          out.merge(key(items.get(x), items.get(y)), 1L, Long::sum);
        }
      }
    }
    return out;
  }

  static String key(String a, String b) {
    return a.compareTo(b) < 0 ? a + "|" + b : b + "|" + a;
  }

  private static void produce(String bootstrap, List<Sent> baskets) {
    Map<String, Object> props = new HashMap<>();
    props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
    long now = System.currentTimeMillis();
    try (KafkaProducer<String, String> producer = new KafkaProducer<>(props, new StringSerializer(), new StringSerializer())) {
      for (int i = 0; i < baskets.size(); i++) {
        Sent b = baskets.get(i);
        StringBuilder value = new StringBuilder("{\"id\":\"").append(b.id()).append("\",\"time\":")
            .append(now - (baskets.size() - i) * 1000L).append(",\"items\":[");
        for (int k = 0; k < b.items().size(); k++) {
          value.append(k > 0 ? "," : "").append('"').append(b.items().get(k)).append('"');
        }
        value.append(']');
        if (b.channel() != null) {
          value.append(",\"attributes\":{\"channel\":\"").append(b.channel()).append("\",\"region\":\"north\"}");
        }
        producer.send(new ProducerRecord<>(TOPIC, b.id(), value.append('}').toString()));
      }
      producer.flush();
    }
  }

  private static void await(String what, BooleanSupplier condition) throws InterruptedException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(90);
    while (!condition.getAsBoolean()) {
      if (System.nanoTime() > deadline) {
        throw new AssertionError("timed out waiting for " + what);
      }
      Thread.sleep(100); // waiting for ingest and a refresh
    }
  }

  private static JsonNode get(HttpClient http, URI base, String path) throws Exception {
    HttpResponse<String> response = http.send(HttpRequest.newBuilder(base.resolve(path)).timeout(Duration.ofSeconds(10))
        .build(), HttpResponse.BodyHandlers.ofString());
    assertEquals(200, response.statusCode(), path + ": " + response.body());
    return JSON.readTree(response.body());
  }

  private static int status(HttpClient http, URI uri) throws Exception {
    return http.send(HttpRequest.newBuilder(uri).timeout(Duration.ofSeconds(10)).build(),
        HttpResponse.BodyHandlers.discarding()).statusCode();
  }

  private static List<String> names(JsonNode array) {
    List<String> out = new ArrayList<>();
    array.forEach(n -> out.add(n.asText()));
    return out;
  }
}
