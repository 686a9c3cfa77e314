package org.pairpulse.serve.suggest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.fixtures.Http;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.sketch.table.PairTableHolder;

/**
 * The suggestion endpoint's {@code ranking} parameter end to end: the two rankings order the same table
 * differently (as {@link SuggesterTest} works out by hand), bad values are JSON errors.
 */
class SuggestRankingHttpTest {
  private static final PairTableHolder ALL = new PairTableHolder();
  private static ServeServer server;
  private static Http http;

  @BeforeAll
  static void start() {
    ServeConfig config = ServeConfig.defaults().with(ServeConfig.PORT, 0).with(ServeConfig.COHORT_FLOOR, 0.0);
    server = ServeServer.builder().config(config).segment("all", ALL).build().start();
    // N = 1000; a:100 b:200 c:50; ab 40, ac 40: both rules in the band at 0.4
    ALL.publish(Tables.defaultHorizons().baskets(1000).item("a", 100).item("b", 200).item("c", 50)
        .pair("a", "b", 40).pair("a", "c", 40).build(1));
    server.catchUp();
    http = new Http(server.uri(), null);
  }

  @AfterAll
  static void stop() {
    server.close();
  }

  private static List<String> items(JsonNode answer) {
    List<String> out = new ArrayList<>();
    answer.get("suggestions").forEach(s -> out.add(s.get("item").asText()));
    return out;
  }

  @Test
  void rankingParameterChoosesTheOrder() {
    // association: shrunk lift c 50/15 > b 50/30; posterior: ln(0.2 · 5/3) > ln(0.05 · 10/3)
    assertEquals(List.of("c", "b"), items(http.get("/api/v1/suggestions?items=a").json()));
    assertEquals(List.of("c", "b"), items(http.get("/api/v1/suggestions?items=a&ranking=association").json()));
    JsonNode posterior = http.get("/api/v1/suggestions?items=a&ranking=posterior").json();
    assertEquals(List.of("b", "c"), items(posterior));
    assertEquals(Math.log(0.2) + Math.log(5.0 / 3), posterior.get("suggestions").get(0).get("score").asDouble(), 1e-9);
  }

  @Test
  void badRankingsAreJsonErrors() {
    Http.Response unknown = http.get("/api/v1/suggestions?items=a&ranking=popular");
    assertEquals(400, unknown.status(), unknown.body());
    assertTrue(unknown.json().get("error").asText().contains("posterior"), unknown.body());
    Http.Response notLift = http.get("/api/v1/suggestions?items=a&ranking=posterior&measure=confidence");
    assertEquals(400, notLift.status(), notLift.body());
    assertTrue(notLift.json().get("error").asText().contains("lift"), notLift.body());
  }
}
