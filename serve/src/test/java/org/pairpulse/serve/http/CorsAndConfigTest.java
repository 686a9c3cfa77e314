package org.pairpulse.serve.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Paths;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.fixtures.Http;
import org.pairpulse.serve.fixtures.Http.Response;
import org.pairpulse.sketch.table.PairTableHolder;

/** CORS when switched on, the defaults of the configuration, and the README's list of keys. */
class CorsAndConfigTest {

  @Test
  void corsAllowsOnlyTheListedOriginsAndPreflightsNeedNoToken() {
    ServeConfig config = ServeConfig.defaults().with(ServeConfig.PORT, 0).with(ServeConfig.WATCH_MILLIS, 60_000)
        .with(ServeConfig.CORS_ORIGINS, "https://shop.example, https://admin.example")
        .with(ServeConfig.TOKEN, "another-token-0123456789");
    EvaluationStatus.Summary evaluation = new EvaluationStatus.Summary(12_000, 5, 0.184, 0.097, "recent");
    try (ServeServer server = ServeServer.builder().config(config).segment("all", new PairTableHolder())
        .evaluation(() -> Optional.of(evaluation)).build().start()) {
      Http anonymous = new Http(server.uri(), null);
      Response preflight = anonymous.method("OPTIONS", "/api/v1/suggestions", "https://shop.example");
      assertEquals(204, preflight.status());
      assertEquals("https://shop.example", preflight.header("Access-Control-Allow-Origin"));
      assertTrue(preflight.header("Access-Control-Allow-Headers").contains("Authorization"));
      Http authorised = anonymous.withToken("another-token-0123456789");
      Response get = authorised.method("GET", "/api/v1/status", "https://admin.example");
      assertEquals(200, get.status());
      assertEquals("https://admin.example", get.header("Access-Control-Allow-Origin"));
      assertNull(authorised.method("GET", "/api/v1/status", "https://evil.example").header("Access-Control-Allow-Origin"));
      // not ready before the first table: readiness says so with 503, the status endpoint with ready=false
      assertEquals(503, anonymous.get("/api/v1/health/ready").status());
      assertEquals(false, authorised.get("/api/v1/status").json().get("ready").asBoolean());
      assertEquals(0, authorised.get("/api/v1/suggestions?items=a").json().get("suggestions").size());
      // the evaluation's hit rate, when the wiring runs one, is part of the status
      assertEquals(0.184, authorised.get("/api/v1/status").json().get("evaluation").get("hitRate").asDouble(), 1e-12);
    }
  }

  @Test
  void defaultsAndValidation() {
    ServeConfig defaults = ServeConfig.defaults();
    assertEquals("127.0.0.1", defaults.string(ServeConfig.HOST));
    assertEquals(8470, defaults.intValue(ServeConfig.PORT));
    assertEquals(50.0, defaults.doubleValue(ServeConfig.COHORT_FLOOR));
    assertTrue(defaults.token().isEmpty());
    assertEquals("", defaults.string(ServeConfig.CORS_ORIGINS));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of("serve.prot", "1")));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(ServeConfig.PORT, "70000")));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(ServeConfig.PORT, "eighty")));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(ServeConfig.TOKEN, "short")));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(ServeConfig.COHORT_FLOOR, "NaN")));
    assertThrows(IllegalArgumentException.class,
        () -> ServeConfig.from(Map.of(ServeConfig.DRIFT_ENTER_ROOT_G2, "2", ServeConfig.DRIFT_EXIT_ROOT_G2, "3")));
    assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(ServeConfig.WEBHOOK_URL, "ftp://x")));
    assertEquals("(set)", defaults.with(ServeConfig.TOKEN, "a-token-of-16-chars").describe().get(ServeConfig.TOKEN));
  }

  @Test
  void theReadmeListsEveryKeyWithItsDefault() throws IOException {
    String readme = Files.readString(Paths.get("README-serve.md"), StandardCharsets.UTF_8);
    for (ServeConfig.Key key : ServeConfig.keys()) {
      String row = "| `" + key.name() + "` | " + (key.defaultValue().isEmpty() ? "(empty)" : "`" + key.defaultValue() + "`")
          + " |";
      assertTrue(readme.contains(row), "README-serve.md lacks the row starting " + row);
    }
  }
}
