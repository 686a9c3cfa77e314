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
import org.apache.kafka.common.config.ConfigDef;
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
  void everyKeyIsDefinedWithKafkasConfigDefinitionsAndEarlierSpellingsMapToKeys() {
    assertTrue(ServeConfig.DEFINITION.names().size() >= 30, "serve's keys: " + ServeConfig.DEFINITION.names());
    for (String name : ServeConfig.DEFINITION.names()) {
      assertTrue(name.matches("[a-z0-9]+(\\.[a-z0-9]+)+"), "dotted lower case: " + name);
    }
    ServeConfig.RENAMED.forEach((old, now) -> {
      assertTrue(ServeConfig.DEFINITION.names().contains(now), old + " -> " + now);
      assertThrows(IllegalArgumentException.class, () -> ServeConfig.from(Map.of(old, "1")),
          "an earlier spelling is the file readers' business, not ServeConfig's: " + old);
    });
    assertEquals(3.0, ServeConfig.from(Map.of(ServeConfig.DRIFT_EXIT_ROOT_G2, " 3 ")).doubleValue(
        ServeConfig.DRIFT_EXIT_ROOT_G2), "values are trimmed");
  }

  /** The README's table is the definitions' (rewrite it with -Dpairpulse.writeDocs=true). */
  @Test
  void theReadmeTableIsTheDefinitions() throws IOException {
    StringBuilder table = new StringBuilder("| key | default | valid | meaning |\n| --- | --- | --- | --- |\n");
    for (ConfigDef.ConfigKey key : ServeConfig.DEFINITION.configKeys().values()) {
      String defaultText = ConfigDef.convertToString(key.defaultValue, key.type);
      table.append("| `").append(key.name).append("` | ")
          .append(defaultText.isEmpty() ? "(empty)" : "`" + defaultText + "`").append(" | ").append(key.validator)
          .append(" | ").append(key.documentation).append(" |\n");
    }
    String begin = "<!-- serve-config-table:begin -->\n";
    String end = "<!-- serve-config-table:end -->";
    String readme = Files.readString(Paths.get("README-serve.md"), StandardCharsets.UTF_8);
    if (Boolean.getBoolean("pairpulse.writeDocs")) {
      readme = readme.substring(0, readme.indexOf(begin) + begin.length()) + table + readme.substring(readme.indexOf(end));
      Files.writeString(Paths.get("README-serve.md"), readme, StandardCharsets.UTF_8);
    }
    int from = readme.indexOf(begin);
    int to = readme.indexOf(end);
    assertTrue(from >= 0 && to > from, "README-serve.md has no table markers");
    assertEquals(table.toString(), readme.substring(from + begin.length(), to), "README-serve.md's key table is stale;"
        + " rewrite it with mvn -pl serve test -Dtest=CorsAndConfigTest -Dpairpulse.writeDocs=true");
  }
}
