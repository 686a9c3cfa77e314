package org.pairpulse.serve.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.net.URLEncoder;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import io.micrometer.core.instrument.Counter;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.fixtures.Http;
import org.pairpulse.serve.fixtures.Http.Response;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import org.pairpulse.sketch.time.ManualClock;

/**
 * The API's contract, endpoint by endpoint, including every bad input: one server for the class,
 * three published versions of a hand-made table (N = 10,000 baskets; cohort floor 50).
 */
class ApiContractTest {
  private static final String TOKEN = "test-token-0123456789";
  private static final PairTableHolder ALL = new PairTableHolder();
  private static final PairTableHolder WEB = new PairTableHolder();
  private static final ManualClock WALL = new ManualClock(1_000_000L);
  private static ServeServer server;
  private static Http http;

  /**
   * a:1000 b:1200 c:800 d:3000 e:500 phone:600 case:590 rare:30 p:3000 q:3000 x:2000 y:2000.
   * ab 400 (a⇒b 0.40), ac 350 (a⇒c 0.35), ad 150 (0.15), bc 300, phone–case 580 (a bundle pair),
   * a–rare 25 (under the floor), pq 300 (lift 1/3: repelling; ad, lift 1/2, is repelling too), xy 400 (lift 1) but 1000 in recent
   * (lift 2.5: emerging).
   */
  private static PairTable table(long version) {
    return Tables.defaultHorizons().baskets(10_000)
        .item("a", 1000).item("b", 1200).item("c", 800).item("d", 3000).item("e", 500).item("phone", 600)
        .item("case", 590).item("rare", 30).item("p", 3000).item("q", 3000).item("x", 2000).item("y", 2000)
        .pair("a", "b", 400).pair("a", "c", 350).pair("a", "d", 150).pair("b", "c", 300).pair("phone", "case", 580)
        .pair("a", "rare", 25).pair("p", "q", 300).pair("x", "y", 400).pair("recent", "x", "y", 1000)
        .build(version);
  }

  @BeforeAll
  static void start() {
    ServeConfig config = ServeConfig.defaults().with(ServeConfig.PORT, 0).with(ServeConfig.TOKEN, TOKEN)
        .with(ServeConfig.MAX_BASKET_ITEMS, 5).with(ServeConfig.MAX_ID_LENGTH, 16)
        .with(ServeConfig.MAX_BODY_BYTES, 1024).with(ServeConfig.MAX_COUNT, 50)
        .with(ServeConfig.DRIFT_DWELL, 0).with(ServeConfig.WATCH_MILLIS, 60_000);
    IngestHealth ingest = new IngestHealth(IngestHealth.State.RUNNING, 12_345, 250.5, 800, 42,
        Map.of("late", 3L, "invalid", 1L), 3000, "");
    SketchHealth sketch = new SketchHealth(100, 16_384, 12, 16_384, 5_000_000,
        List.of(new SketchHealth.HorizonHealth("recent", 2000, 1.5, 0.7), new SketchHealth.HorizonHealth("day", 10_000, 4, 2),
            new SketchHealth.HorizonHealth("baseline", 10_000, 9, 3)));
    // the wiring shares one registry: ingest's own meters (here one, as IngestMetrics names it) appear on /metrics
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    Counter.builder("pairpulse.ingest.dead.letters").tag("reason", "late").register(registry).increment(3);
    server = ServeServer.builder().config(config).segment("all", ALL).segment("web", WEB).registry(registry)
        .ingestStatus(() -> ingest).sketchHealth(() -> sketch).wallClock(WALL).build().start();
    for (long v = 1; v <= 3; v++) {
      ALL.publish(table(v));
      server.catchUp();
    }
    WEB.publish(Tables.defaultHorizons().baskets(100).item("a", 60).item("b", 60).item("c", 20).pair("a", "b", 55)
        .pair("a", "c", 20).build(1));
    server.catchUp();
    WALL.set(3000 + 1500);
    http = new Http(server.uri(), TOKEN);
  }

  @AfterAll
  static void stop() {
    server.close();
  }

  /** Every error is JSON with exactly "error" and "status" (never a stack trace). */
  private static JsonNode assertError(Response r, int status) {
    assertEquals(status, r.status(), r.body());
    assertTrue(r.header("Content-Type").startsWith("application/json"), r.header("Content-Type"));
    JsonNode json = r.json();
    assertEquals(Set.of("error", "status"), fieldNames(json), r.body());
    assertEquals(status, json.get("status").asInt());
    assertFalse(json.get("error").asText().isBlank());
    assertFalse(r.body().contains("Exception") || r.body().contains("\tat ") || r.body().contains("org.pairpulse"),
        r.body());
    return json;
  }

  private static Set<String> fieldNames(JsonNode node) {
    Set<String> names = new HashSet<>();
    node.fieldNames().forEachRemaining(names::add);
    return names;
  }

  private static List<String> items(JsonNode suggestions) {
    List<String> list = new ArrayList<>();
    for (JsonNode s : suggestions.get("suggestions")) {
      list.add(s.get("item").asText());
    }
    return list;
  }

  private static String q(String text) {
    return URLEncoder.encode(text, StandardCharsets.UTF_8);
  }

  // ---------------------------------------------------------------- health, status, auth

  @Test
  void healthNeedsNoToken() {
    Http anonymous = http.withToken(null);
    Response health = anonymous.get("/api/v1/health");
    assertEquals(200, health.status());
    assertEquals("up", health.json().get("status").asText());
    Response ready = anonymous.get("/api/v1/health/ready");
    assertEquals(200, ready.status());
    assertEquals(3, ready.json().get("tableVersion").asLong());
  }

  @Test
  void everythingElseNeedsTheToken() {
    Http anonymous = http.withToken(null);
    for (String path : List.of("/api/v1/status", "/api/v1/suggestions?items=a", "/api/v1/drift", "/api/v1/openapi.json",
        "/metrics")) {
      Response r = anonymous.get(path);
      assertEquals("missing bearer token", assertError(r, 401).get("error").asText());
      assertEquals("Bearer realm=\"pairpulse\"", r.header("WWW-Authenticate"));
    }
    assertEquals("invalid bearer token", assertError(http.withToken("wrong-token-0123456789").get("/api/v1/status"), 401)
        .get("error").asText());
    assertError(anonymous.post("/api/v1/suggestions", "application/json", "{\"items\":[\"a\"]}"), 401);
    // the dashboard's static shell holds no data and loads without the token
    assertEquals(200, anonymous.get("/").status());
  }

  @Test
  void statusReportsTableIngestSketchAndSettings() {
    JsonNode s = http.get("/api/v1/status").json();
    assertTrue(s.get("ready").asBoolean());
    assertEquals("all", s.get("segment").asText());
    assertEquals(List.of("all", "web"), List.of(s.get("segments").get(0).asText(), s.get("segments").get(1).asText()));
    JsonNode table = s.get("table");
    assertEquals(3, table.get("version").asLong());
    assertEquals(1500, table.get("ageMillis").asLong());
    assertEquals("shrunk_lift", table.get("sortMeasure").asText());
    assertEquals("window", table.get("horizons").get(1).get("kind").asText());
    assertEquals(10_000, table.get("horizons").get(2).get("baskets").asDouble());
    assertEquals(3, table.get("suppressedPairs").asInt()); // a–rare in three horizons
    assertEquals("running", s.get("ingest").get("state").asText());
    assertEquals(42, s.get("ingest").get("lagRecords").asLong());
    assertEquals(3, s.get("ingest").get("deadLettersByReason").get("late").asLong());
    assertEquals(9.0, s.get("sketch").get("horizons").get(2).get("pairErrorBound").asDouble());
    assertEquals(50.0, s.get("serving").get("cohortFloor").asDouble());
    assertEquals("baseline", s.get("serving").get("evidenceHorizon").asText());
    assertTrue(s.get("serving").get("tokenRequired").asBoolean());
    assertTrue(s.get("evaluation").isNull());
    assertEquals(404, http.get("/api/v1/status?segment=nope").status());
    assertEquals(1, http.get("/api/v1/status?segment=web").json().get("table").get("version").asLong());
  }

  // ---------------------------------------------------------------- suggestions

  @Test
  void suggestionsWithEvidence() {
    JsonNode r = http.get("/api/v1/suggestions?items=a").json();
    // c: E = 1000·800/10000 = 80, shrunk (350+10)/(80+10) = 4; b: E = 120, (400+10)/(120+10); d: a⇒d 0.15 outside the band
    assertEquals(List.of("c", "b"), items(r));
    assertEquals(Math.log(4.0), r.get("suggestions").get(0).get("score").asDouble(), 1e-9);
    JsonNode evidence = r.get("suggestions").get(1).get("evidence").get(0);
    assertEquals("a", evidence.get("basketItem").asText());
    assertEquals("recent", evidence.get("horizon").asText());
    assertEquals("shrunk_lift", evidence.get("measure").asText());
    assertEquals(0.4, evidence.get("confidence").asDouble(), 1e-12);
    assertEquals(0.04, evidence.get("support").asDouble(), 1e-12);
    assertEquals(400.0 * 10_000 / (1000 * 1200), evidence.get("lift").asDouble(), 1e-9);
    assertTrue(evidence.get("liftLower").asDouble() < evidence.get("lift").asDouble());
    assertTrue(evidence.get("liftUpper").asDouble() > evidence.get("lift").asDouble());
    assertEquals(3, r.get("tableVersion").asLong());
    assertEquals("all", r.get("segment").asText());
  }

  @Test
  void suggestionsCombineBasketItemsAndPostEqualsGet() {
    JsonNode get = http.get("/api/v1/suggestions?items=b&items=a&horizon=day&measure=lift&count=5").json();
    JsonNode post = http.post("/api/v1/suggestions", "application/json",
        "{\"items\":[\"a\",\"b\",\"a\"],\"horizon\":\"day\",\"measure\":\"lift\",\"count\":5}").json();
    assertEquals(get, post);
    assertEquals(List.of("a", "b"), List.of(get.get("basket").get(0).asText(), get.get("basket").get(1).asText()));
    // c is the only candidate: ln lift(a,c) + ln lift(b,c) = ln 4.375 + ln(300·10000/(1200·800))
    assertEquals(List.of("c"), items(get));
    assertEquals(Math.log(4.375) + Math.log(3.125), get.get("suggestions").get(0).get("score").asDouble(), 1e-9);
    assertEquals(2, get.get("suggestions").get(0).get("evidence").size());
  }

  @Test
  void suggestionOptions() {
    // the band switched wide open lets d in; a support floor of 0.039 keeps only b and... ab has support 0.04
    // (under the posterior ranking: the association ranking's offer screen keeps d, far below independence, out)
    assertTrue(items(http.get("/api/v1/suggestions?items=a&minConfidence=0&maxConfidence=1&ranking=posterior").json())
        .contains("d"));
    assertTrue(!items(http.get("/api/v1/suggestions?items=a&minConfidence=0&maxConfidence=1").json()).contains("d"));
    assertEquals(List.of("b"), items(http.get("/api/v1/suggestions?items=a&minSupport=0.038").json()));
    assertEquals(1, http.get("/api/v1/suggestions?items=a&count=1").json().get("suggestions").size());
    // the bundle partner is never suggested unless asked for
    assertEquals(List.of(), items(http.get("/api/v1/suggestions?items=phone&minConfidence=0&maxConfidence=1").json()));
    assertEquals(List.of("case"), items(http.get(
        "/api/v1/suggestions?items=phone&minConfidence=0&maxConfidence=1&includeBundles=true").json()));
    // segments answer from their own tables
    assertEquals(List.of(), items(http.get("/api/v1/suggestions?items=a&segment=web").json()));
    assertEquals(List.of("b"), items(http.get("/api/v1/suggestions?items=a&segment=web&maxConfidence=1").json()));
  }

  @Test
  void unknownItemsGiveAnEmptyWellFormedAnswer() {
    JsonNode r = http.get("/api/v1/suggestions?items=" + q("never-seen")).json();
    assertEquals(0, r.get("suggestions").size());
    assertEquals("never-seen", r.get("unknownItems").get(0).asText());
    // an item under the cohort floor is indistinguishable from an unknown one
    assertEquals("rare", http.get("/api/v1/suggestions?items=rare&minConfidence=0&maxConfidence=1").json()
        .get("unknownItems").get(0).asText());
  }

  /** Bad GET requests of every route: a JSON error with the status ({@link #assertError}), never a stack trace. */
  @ParameterizedTest(name = "{0} -> {1}")
  @CsvSource(delimiter = ' ', textBlock = """
      # no items
      /api/v1/suggestions 400
      /api/v1/suggestions?items= 400
      /api/v1/suggestions?items=a,,b 400
      # 6 > 5
      /api/v1/suggestions?items=a,b,c,d,e,f 400
      # 17 > 16 characters
      /api/v1/suggestions?items=abcdefghijklmnopq 400
      # a control character
      /api/v1/suggestions?items=a%01b 400
      /api/v1/suggestions?items=a&count=0 400
      /api/v1/suggestions?items=a&count=51 400
      /api/v1/suggestions?items=a&count=ten 400
      /api/v1/suggestions?items=a&measure=nope 400
      /api/v1/suggestions?items=a&horizon=week 400
      /api/v1/suggestions?items=a&segment=nope 404
      /api/v1/suggestions?items=a&minConfidence=2 400
      /api/v1/suggestions?items=a&minConfidence=NaN 400
      /api/v1/suggestions?items=a&maxConfidence=x 400
      /api/v1/suggestions?items=a&minConfidence=0.7&maxConfidence=0.6 400
      /api/v1/suggestions?items=a&minSupport=-1 400
      /api/v1/suggestions?items=a&includeBundles=yes 400
      # unknown parameter (a typo)
      /api/v1/suggestions?items=a&minconfidence=0.1 400
      /api/v1/suggestions?items=a&count=1&count=2 400
      /api/v1/nope 404
      /nope.html 404
      /api/v1/rules 400
      /api/v1/rules?item=a&measure=bogus 400
      /api/v1/rules?item=a&segment=nope 404
      /api/v1/rules?item=a&count=-3 400
      /api/v1/pairs/top?measure=best 400
      /api/v1/pairs/top?includeBundles=maybe 400
      /api/v1/pairs/repelling?count=1000 400
      # repelling takes no measure
      /api/v1/pairs/repelling?measure=lift 400
      /api/v1/drift?count=0 400
      /api/v1/alerts?segment=nope 404
      /api/v1/trend/pair?a=a&b=a 400
      /api/v1/trend/pair?a=a 400
      /api/v1/trend/item 400
      """)
  void aBadGetRequestGetsAJsonError(String path, int status) {
    assertError(http.get(path), status);
  }

  @Test
  void suggestionBadInputs() {
    // malformed percent-encoding in the query (no client library sends it: raw socket)
    String raw = http.raw("GET /api/v1/suggestions?items=a%zz HTTP/1.1\r\nHost: localhost\r\nAuthorization: Bearer "
        + TOKEN + "\r\nConnection: close\r\n\r\n");
    assertTrue(raw.startsWith("HTTP/1.1 400") && raw.contains("\"status\":400"), raw);
    assertTrue(assertError(http.get("/api/v1/suggestions?items=a&measure=nope"), 400).get("error").asText()
        .contains("shrunk_lift"), "the error lists the valid measures");
    assertTrue(assertError(http.get("/api/v1/suggestions?items=a&horizon=week"), 400).get("error").asText()
        .contains("recent, day, baseline"));
  }

  @Test
  void suggestionBadBodies() {
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": [\"a\""), 400); // truncated JSON
    assertError(http.post("/api/v1/suggestions", "application/json", "[\"a\"]"), 400); // not an object
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": \"a\"}"), 400); // not an array
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": [1, 2]}"), 400);
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": []}"), 400);
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": [\"a\"], \"colour\": 1}"), 400);
    assertError(http.post("/api/v1/suggestions", "application/json", "{\"items\": [\"a\"], \"count\": {\"n\": 1}}"), 400);
    assertError(http.post("/api/v1/suggestions", "text/plain", "{\"items\": [\"a\"]}"), 415);
    String big = "{\"items\": [\"a\"], \"segment\": \"" + "x".repeat(2000) + "\"}";
    assertError(http.post("/api/v1/suggestions", "application/json", big), 413);
    // an id with a comma is fine in a body (GET splits on commas)
    assertEquals(200, http.post("/api/v1/suggestions", "application/json", "{\"items\": [\"a,b\"]}").status());
  }

  @Test
  void routingAndJettyErrorsAreJsonToo() {
    assertError(http.method("DELETE", "/api/v1/status", null), 405);
    assertError(http.method("PUT", "/api/v1/suggestions", null), 405);
    // a request no client library would send: an invalid percent-escape in the path, parsed by Jetty itself
    String raw = http.raw("GET /api/v1/%zz HTTP/1.1\r\nHost: localhost\r\nConnection: close\r\n\r\n");
    assertTrue(raw.startsWith("HTTP/1.1 400"), raw);
    assertTrue(raw.contains("\"status\":400") && raw.contains("\"error\""), raw);
    assertFalse(raw.contains("<html") || raw.contains("Exception"), raw);
  }

  @Test
  void corsIsOffByDefault() {
    Response get = http.method("GET", "/api/v1/health", "https://elsewhere.example");
    assertEquals(200, get.status());
    assertNull(get.header("Access-Control-Allow-Origin"));
    Response preflight = http.method("OPTIONS", "/api/v1/suggestions", "https://elsewhere.example");
    assertNull(preflight.header("Access-Control-Allow-Origin"));
    assertTrue(preflight.status() >= 400);
  }

  // ---------------------------------------------------------------- rules, pairs, items

  @Test
  void rulesOutgoingAndIncoming() {
    JsonNode r = http.get("/api/v1/rules?item=a&horizon=baseline").json();
    assertEquals("confidence", r.get("measure").asText());
    JsonNode out = r.get("outgoing");
    // a ⇒ b 0.40, a ⇒ c 0.35, a ⇒ d 0.15; a–rare is under the floor
    assertEquals(List.of("b", "c", "d"), List.of(out.get(0).get("consequent").asText(), out.get(1).get("consequent").asText(),
        out.get(2).get("consequent").asText()));
    assertEquals(3, out.size());
    assertEquals(0.4, out.get(0).get("confidence").asDouble(), 1e-12);
    JsonNode in = r.get("incoming");
    // c ⇒ a 350/800 = 0.4375, b ⇒ a 400/1200, d ⇒ a 150/3000
    assertEquals("c", in.get(0).get("antecedent").asText());
    assertEquals(0.4375, in.get(0).get("confidence").asDouble(), 1e-12);
    assertEquals(1000, r.get("itemCount").get("value").asDouble());
    JsonNode unknown = http.get("/api/v1/rules?item=zzz").json();
    assertEquals(0, unknown.get("outgoing").size());
    assertTrue(unknown.get("itemCount").isNull());
  }

  @Test
  void topAndRepellingPairs() {
    JsonNode top = http.get("/api/v1/pairs/top?horizon=day&measure=lift&count=3").json();
    JsonNode pairs = top.get("pairs");
    assertEquals(3, pairs.size());
    // lifts: phone–case 580·10000/(600·590) = 16.38, a–c 4.375, b–c 3.125
    assertEquals(Set.of("phone", "case"), Set.of(pairs.get(0).get("a").asText(), pairs.get(0).get("b").asText()));
    assertTrue(pairs.get(0).get("bundle").asBoolean());
    assertTrue(pairs.get(0).get("lift").asDouble() >= pairs.get(1).get("lift").asDouble());
    assertTrue(pairs.get(1).get("lift").asDouble() >= pairs.get(2).get("lift").asDouble());
    JsonNode noBundles = http.get("/api/v1/pairs/top?horizon=day&measure=lift&count=3&includeBundles=false").json();
    assertFalse(noBundles.get("pairs").get(0).get("bundle").asBoolean());
    for (JsonNode p : http.get("/api/v1/pairs/top?count=50").json().get("pairs")) {
      assertFalse(p.get("a").asText().equals("rare") || p.get("b").asText().equals("rare"), "floor breached: " + p);
    }
    JsonNode repelling = http.get("/api/v1/pairs/repelling?horizon=baseline").json().get("pairs");
    // p–q: lift 300·10000/(3000·3000) = 1/3; a–d: 150·10000/(1000·3000) = 1/2; p–q is the more repelling
    assertEquals(2, repelling.size());
    assertEquals("p", repelling.get(0).get("a").asText());
    assertEquals("d", repelling.get(1).get("b").asText());
    assertTrue(repelling.get(0).get("liftUpper").asDouble() < 1);
    assertTrue(repelling.get(0).get("repelling").asBoolean());
  }

  @Test
  void itemsObeyTheFloor() {
    JsonNode r = http.get("/api/v1/items?horizon=baseline&count=50").json();
    List<String> names = new ArrayList<>();
    r.get("items").forEach(i -> names.add(i.get("item").asText()));
    assertEquals("d", names.get(0)); // 3000, tied with p and q: ids break the tie
    assertFalse(names.contains("rare"));
    assertEquals(0.3, r.get("items").get(0).get("share").asDouble(), 1e-12);
    assertEquals(List.of("phone"), items(http.get("/api/v1/items?prefix=ph").json(), "item"));
    assertError(http.get("/api/v1/items?prefix=" + "p".repeat(40)), 400);
  }

  private static List<String> items(JsonNode r, String field) {
    List<String> out = new ArrayList<>();
    r.get("items").forEach(i -> out.add(i.get(field).asText()));
    return out;
  }

  // ---------------------------------------------------------------- drift, alerts, trend

  @Test
  void driftAndAlertHistory() {
    JsonNode d = http.get("/api/v1/drift").json();
    assertEquals(3, d.get("tableVersion").asLong());
    JsonNode emerging = d.get("emerging").get(0);
    assertEquals("x", emerging.get("a").asText());
    assertEquals("active", emerging.get("state").asText());
    assertEquals(2.5, emerging.get("recentLift").asDouble(), 1e-9);
    assertEquals(1.0, emerging.get("baselineLift").asDouble(), 1e-9);
    assertTrue(emerging.get("signedRootG2").asDouble() > 5);
    assertEquals(1000, emerging.get("sinceMillis").asLong()); // event time of version 1 (dwell 0)
    assertEquals(0, d.get("fading").size());
    JsonNode alerts = http.get("/api/v1/alerts").json().get("alerts");
    assertEquals(1, alerts.size(), "raised once, not once per version");
    assertEquals("emerging", alerts.get(0).get("kind").asText());
    assertEquals("raised", alerts.get(0).get("transition").asText());
    assertEquals(2.5, alerts.get(0).get("evidence").get("recentLift").asDouble(), 1e-9);
    assertEquals(0, http.get("/api/v1/alerts?segment=web").json().get("alerts").size());
  }

  @Test
  void trendOfAPairAndAnItem() {
    JsonNode t = http.get("/api/v1/trend/pair?a=c&b=a").json();
    assertEquals("a", t.get("a").asText());
    assertEquals(3, t.get("points").asInt());
    assertEquals(List.of(1L, 2L, 3L), List.of(t.get("versions").get(0).asLong(), t.get("versions").get(1).asLong(),
        t.get("versions").get(2).asLong()));
    assertEquals(4.375, t.get("series").get("day").get("lift").get(2).asDouble(), 1e-6);
    assertEquals(0.35, t.get("series").get("baseline").get("confidenceAB").get(0).asDouble(), 1e-6); // a ⇒ c
    JsonNode item = http.get("/api/v1/trend/item?item=d").json();
    assertEquals(3, item.get("points").asInt());
    assertEquals(0.3, item.get("series").get("baseline").get("share").get(0).asDouble(), 1e-6);
    assertEquals(0, http.get("/api/v1/trend/pair?a=a&b=rare").json().get("points").asInt());
  }

  // ---------------------------------------------------------------- OpenAPI, metrics, cache

  @Test
  void everyRouteIsDocumentedAndEveryDocumentedPathIsARoute() {
    JsonNode doc = http.get("/api/v1/openapi.json").json();
    assertEquals("3.0.3", doc.get("openapi").asText());
    Set<String> documented = new HashSet<>();
    for (Map.Entry<String, JsonNode> path : doc.get("paths").properties()) {
      path.getValue().fieldNames().forEachRemaining(m -> documented.add(m.toUpperCase() + " " + path.getKey()));
    }
    assertEquals(new HashSet<>(server.routes()), documented);
  }

  @Test
  void metricsInPrometheusText() {
    http.get("/api/v1/suggestions?items=a,b&count=7");
    Response r = http.get("/metrics");
    assertEquals(200, r.status());
    assertTrue(r.header("Content-Type").startsWith("text/plain"));
    String text = r.body();
    for (String line : List.of("pairpulse_suggestion_latency_seconds_bucket", "pairpulse_suggestion_latency_seconds_count",
        "pairpulse_pair_table_age_seconds{segment=\"all\"} 1.5", "pairpulse_pair_table_version{segment=\"all\"} 3.0",
        "pairpulse_refresh_duration_seconds_count", "pairpulse_ingest_dead_letters_total{reason=\"late\"} 3.0",
        "pairpulse_sketch_baskets{horizon=\"recent\"} 2000.0", "pairpulse_sketch_state_bytes 5000000.0",
        "pairpulse_pair_table_pairs{segment=\"all\",state=\"suppressed\"} 3.0", "pairpulse_sketch_error_bound{counts=\"pairs\",horizon=\"baseline\"} 9.0",
        "pairpulse_sketch_fill_ratio{table=\"pairs\"}", "pairpulse_alerts_total{kind=\"emerging\",transition=\"raised\"} 1.0",
        "pairpulse_response_cache_total{result=\"miss\"}", "pairpulse_http_errors_total")) {
      assertTrue(text.contains(line), "missing " + line);
    }
  }

  @Test
  void responsesAreCachedPerTableVersion() {
    String path = "/api/v1/suggestions?items=b&count=9";
    JsonNode first = http.get(path).json();
    double hitsBefore = counter("pairpulse_response_cache_total{result=\"hit\"}");
    JsonNode second = http.get(path).json();
    assertEquals(first, second);
    assertEquals(hitsBefore + 1, counter("pairpulse_response_cache_total{result=\"hit\"}"));
  }

  private static double counter(String series) {
    for (String line : http.get("/metrics").body().split("\n")) {
      if (line.startsWith(series + " ")) {
        return Double.parseDouble(line.substring(series.length() + 1));
      }
    }
    return 0;
  }

  @Test
  void securityHeaders() {
    Response api = http.get("/api/v1/health");
    assertEquals("nosniff", api.header("X-Content-Type-Options"));
    assertEquals("no-store", api.header("Cache-Control"));
    assertNull(api.header("Server"));
    Response page = http.get("/");
    assertNotNull(page.header("Content-Security-Policy"));
    assertTrue(page.header("Content-Security-Policy").contains("default-src 'self'"));
  }
}
