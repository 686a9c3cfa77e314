package org.pairpulse.ops.tools.demo;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.ConnectException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.MethodOrderer;
import org.junit.jupiter.api.Order;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.TestMethodOrder;
import org.pairpulse.ingest.kafka.StableOffsets;
import org.pairpulse.ops.monitoring.AlertRules;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.serve.IngestHealth;

/**
 * The demo end to end, as {@code pairpulse demo} runs it, on a fast clock: real in-process broker, the
 * scenario producer, ingest, the server over HTTP. One run (about a minute here) serves every check, in
 * order: first rules through the API, the dashboard, the planted emerging pair's alert in the API's alert
 * history, every metric the alert rules use in the real {@code /metrics}, and a clean shutdown.
 *
 * <p>Clock: 20 baskets per simulated minute; the first 3.5 simulated days are sent at once (the demo's
 * fast-forward: about 100,000 baskets, counted as fast as ingest can before the clock starts), then one
 * simulated day every 20 s up to day 4 06:00: past the emerging pair's start (day 3, 12:00) by 18 simulated
 * hours. The clock must stay slow enough
 * that ingest's refreshes (a few a second) come every few simulated minutes: drift needs two observations a
 * dwell apart, and the pair's evidence must pass the cohort floor (50 baskets since it became tracked).
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
@TestMethodOrder(MethodOrderer.OrderAnnotation.class)
class DemoEndToEndTest {
  private static final ObjectMapper JSON = new ObjectMapper();
  /** The target is 30 s on an idle machine; the bound leaves room for a loaded build machine. */
  private static final Duration FIRST_RULES_BOUND = Duration.ofSeconds(60);

  private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
  private Demo demo;
  private URI base;

  @BeforeAll
  void start() {
    DemoSettings settings = DemoSettings.builder()
        .speed(DemoSettings.DAY_MILLIS / 20_000.0)
        .durationSimMillis(4 * DemoSettings.DAY_MILLIS + DemoSettings.DAY_MILLIS / 4)
        .fastForwardSimMillis(3 * DemoSettings.DAY_MILLIS + DemoSettings.DAY_MILLIS / 2)
        .basketsPerMinute(20)
        .port(0)
        .refreshIntervalMillis(500)
        .build();
    demo = Demo.start(settings);
    base = demo.server().uri();
  }

  @AfterAll
  void stop() {
    if (demo != null) {
      demo.close();
    }
  }

  @Test
  @Order(1)
  void firstRulesAppearThroughTheApiWithinTheBound() throws Exception {
    long deadline = System.nanoTime() + FIRST_RULES_BOUND.toNanos();
    JsonNode pairs = null;
    while (System.nanoTime() < deadline) {
      JsonNode top = get("/api/v1/pairs/top?horizon=recent&count=5");
      if (top.path("pairs").size() > 0) {
        pairs = top.path("pairs");
        break;
      }
      Thread.sleep(200); // polling the API as a user would
    }
    long seconds = demo.wallMillis() / 1000;
    System.out.printf("first rules through the API after %d s (server ready after %.1f s)%n", seconds,
        demo.readyWallMillis() / 1000.0);
    assertNotNull(pairs, "no published pair within " + FIRST_RULES_BOUND);
    JsonNode first = pairs.get(0);
    assertFalse(first.path("a").asText().isEmpty(), first.toString());
    JsonNode rules = get("/api/v1/rules?item=" + first.path("a").asText() + "&horizon=recent");
    assertTrue(rules.path("outgoing").size() > 0, "rules of " + first.path("a") + ": " + rules);
  }

  @Test
  @Order(2)
  void dashboardAnswers() throws Exception {
    HttpResponse<String> page = http.send(HttpRequest.newBuilder(base.resolve("/")).GET().build(),
        HttpResponse.BodyHandlers.ofString());
    assertEquals(200, page.statusCode());
    assertTrue(page.headers().firstValue("content-type").orElse("").startsWith("text/html"), page.headers().toString());
    assertTrue(page.body().contains("pairpulse"), page.body());
  }

  @Test
  @Order(3)
  void plantedEmergingPairIsAlertedThroughTheAlertHistory() throws Exception {
    assertTrue(demo.awaitPlayed(Duration.ofSeconds(120)), "the scenario was not played and counted in time");
    PlantedPair planted = demo.groundTruth().ofKind(PlantedKind.EMERGING).get(0);
    assertEquals(List.of("boost-lowlatency-5gb", "pack-esports"), planted.items());
    JsonNode alerts = get("/api/v1/alerts?count=100").path("alerts");
    JsonNode raised = null;
    for (JsonNode a : alerts) {
      if (a.path("kind").asText().equals("emerging") && a.path("transition").asText().equals("raised")
          && a.path("a").asText().equals(planted.items().get(0)) && a.path("b").asText().equals(planted.items().get(1))) {
        raised = a;
      }
    }
    assertNotNull(raised, "no emerging alert for " + planted.items() + " in " + alerts);
    long at = raised.path("atMillis").asLong();
    assertTrue(at >= planted.startMillis(), "alerted before the planted start: " + raised);
    double delayMinutes = (at - planted.startMillis()) / 60_000.0;
    System.out.printf("emerging pair alerted %.0f simulated minutes after its planted start%n", delayMinutes);
    // the delay depends on how many refreshes the machine manages per simulated hour: only bound it by the run
    assertTrue(at < demo.settings().simEndMillis(), "alerted after the run: " + raised);
    assertTrue(raised.path("evidence").path("liftRatio").asDouble() >= 1.5, raised.toString());
    // every scenario basket is a valid event of ingest's contract
    assertEquals(0, demo.pipeline().ingestHealth().deadLettersTotal(), demo.pipeline().ingestHealth().toString());
    // the demo's own record of it agrees
    assertTrue(demo.detections().stream().anyMatch(d -> d.planted().equals(planted)), demo.detections().toString());
  }

  @Test
  @Order(4)
  void everyMetricOfTheAlertRulesIsInTheRealScrape() throws Exception {
    // an error response registers the per-status error counter, as any real traffic does
    HttpResponse<String> missing404 = http.send(HttpRequest.newBuilder(base.resolve("/api/v1/no-such-endpoint")).GET()
        .build(), HttpResponse.BodyHandlers.ofString());
    assertEquals(404, missing404.statusCode());
    Set<String> scraped = AlertRules.metricNamesIn(getText("/metrics"));
    Set<String> used = AlertRules.metricNames(AlertRules.rulesFile());
    assertTrue(used.size() >= 8, "too few metrics in the rules: " + used);
    Set<String> missing = new TreeSet<>(used);
    missing.removeAll(scraped);
    assertTrue(missing.isEmpty(), "alert rules use metrics that /metrics does not have: " + missing);
  }

  @Test
  @Order(5)
  void liveEvaluationReachesTheStatusAndTheMetrics() throws Exception {
    // the evaluation reads the live part of the run (it starts at the end of the fast-forward)
    long trials = demo.pipeline().evaluation().orElseThrow().trials();
    assertTrue(trials > 100, "live trials: " + trials);
    JsonNode evaluation = get("/api/v1/status").path("evaluation");
    assertTrue(evaluation.path("baskets").asLong() >= 100, evaluation.toString());
    List<String> methods = new java.util.ArrayList<>();
    evaluation.path("methods").forEach(m -> methods.add(m.path("method").asText()));
    assertEquals(List.of("incremental", "nightly", "popular"), methods);
    assertTrue(evaluation.path("series").size() >= 2, evaluation.toString());
    String scrape = getText("/metrics");
    assertTrue(scrape.contains("pairpulse_evaluation_trials_total"), "evaluation metrics in /metrics");
  }

  @Test
  @Order(6)
  void channelSegmentsAreServed() throws Exception {
    // the scenario's channels (app, web, store) each hold thousands of baskets: all pass the cohort floor
    JsonNode status = get("/api/v1/status");
    List<String> segments = new java.util.ArrayList<>();
    status.path("segments").forEach(n -> segments.add(n.asText()));
    assertTrue(segments.containsAll(List.of("all", "channel=app", "channel=web", "channel=store")), segments.toString());
    JsonNode all = get("/api/v1/pairs/top?horizon=baseline&count=1").path("pairs").get(0);
    JsonNode app = get("/api/v1/pairs/top?horizon=baseline&count=1&segment=channel=app").path("pairs").get(0);
    assertTrue(app.path("baskets").asDouble() < all.path("baskets").asDouble(), "a segment holds fewer baskets: " + app + " " + all);
  }

  @Test
  @Order(7)
  void shutsDownCleanly() throws Exception {
    long startNanos = System.nanoTime();
    // the pipeline first (final checkpoint and commit), with the broker still up to read what it committed
    demo.pipeline().close();
    assertNull(demo.pipeline().failure(), "ingest failed");
    assertEquals(IngestHealth.State.STOPPED, demo.pipeline().ingestHealth().state());
    try (Admin admin = Admin.create(Map.of(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, demo.bootstrapServers()))) {
      // the commits are transactional: ask for stable offsets (a plain fetch may still answer the previous ones)
      Map<TopicPartition, OffsetAndMetadata> committed = StableOffsets.committed(admin, Demo.GROUP,
          admin.listConsumerGroupOffsets(Demo.GROUP).partitionsToOffsetAndMetadata().get(30, TimeUnit.SECONDS).keySet(),
          java.time.Duration.ofSeconds(30));
      Map<TopicPartition, OffsetSpec> latest = new HashMap<>();
      committed.keySet().forEach(tp -> latest.put(tp, OffsetSpec.latest()));
      assertFalse(committed.isEmpty(), "nothing committed");
      var ends = admin.listOffsets(latest).all().get(30, TimeUnit.SECONDS);
      for (var e : committed.entrySet()) {
        // every record sent (the scenario producer is not transactional) was checkpointed and committed
        assertEquals(ends.get(e.getKey()).offset(), e.getValue().offset(), "not all records committed on close: "
            + e.getKey());
      }
    }
    demo.close();
    double seconds = (System.nanoTime() - startNanos) / 1e9;
    System.out.printf("demo closed in %.1f s%n", seconds);
    assertTrue(seconds < 60, "close took " + seconds + " s");
    assertTrue(demo.isClosed());
    assertThrows(ConnectException.class, () -> http.send(HttpRequest.newBuilder(base.resolve("/api/v1/health"))
        .timeout(Duration.ofSeconds(5)).GET().build(), HttpResponse.BodyHandlers.ofString()));
    for (Thread t : Thread.getAllStackTraces().keySet()) {
      assertFalse(t.isAlive() && !t.isDaemon() && t.getName().startsWith("pairpulse-"), "thread left running: " + t);
    }
  }

  private JsonNode get(String path) throws IOException, InterruptedException {
    return JSON.readTree(getText(path));
  }

  private String getText(String path) throws IOException, InterruptedException {
    HttpResponse<String> response = http.send(HttpRequest.newBuilder(base.resolve(path)).timeout(Duration.ofSeconds(10))
        .GET().build(), HttpResponse.BodyHandlers.ofString());
    assertEquals(200, response.statusCode(), path + ": " + response.body());
    return response.body();
  }
}
