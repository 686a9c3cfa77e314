package org.pairpulse.ops.tools.group;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/** The comparisons the group checks rest on: answers equal up to the instance's own fields, alert tracks. */
class GroupChecksTest {
  private static final ObjectMapper JSON = new ObjectMapper();

  private static JsonNode json(String text) throws Exception {
    return JSON.readTree(text);
  }

  @Test
  void answersDifferOnlyBeyondTheirOwnFieldsAndTheTolerance() throws Exception {
    JsonNode a = json("{\"tableVersion\":3,\"pairs\":[{\"a\":\"x\",\"b\":\"y\",\"lift\":2.0,\"baskets\":40}]}");
    JsonNode sameButOwn = json("{\"tableVersion\":9,\"pairs\":[{\"a\":\"x\",\"b\":\"y\",\"lift\":2.0000000000001,"
        + "\"baskets\":40}]}");
    JsonNode otherCount = json("{\"tableVersion\":3,\"pairs\":[{\"a\":\"x\",\"b\":\"y\",\"lift\":2.0,\"baskets\":41}]}");
    JsonNode otherOrder = json("{\"tableVersion\":3,\"pairs\":[{\"a\":\"y\",\"b\":\"x\",\"lift\":2.0,\"baskets\":40}]}");
    JsonNode shorter = json("{\"tableVersion\":3,\"pairs\":[]}");
    String q = GroupAnswers.QUERIES.get(0);
    assertTrue(GroupAnswers.difference(q, a, sameButOwn, 1e-9).isEmpty());
    assertEquals(q + ".pairs[0].baskets: 40.0 vs 41.0", GroupAnswers.difference(q, a, otherCount, 1e-9).orElseThrow());
    assertTrue(GroupAnswers.difference(q, a, otherOrder, 1e-9).isPresent());
    assertTrue(GroupAnswers.difference(q, a, shorter, 1e-9).orElseThrow().contains("1 vs 0 entries"));
    assertTrue(GroupAnswers.difference(q, a, json("{\"tableVersion\":3,\"pairs\":[],\"extra\":1}"), 1e-9).isPresent());
    assertTrue(GroupAnswers.difference(Map.of(q, a), Map.of(q, sameButOwn), 1e-9).isEmpty());
  }

  @Test
  void alertTracksIgnoreTheInterleavingOfDifferentTracksOnly() {
    String raisedAB = "all org.pairpulse.alert.emerging.raised pairs/a/b";
    String resolvedAB = "all org.pairpulse.alert.emerging.resolved pairs/a/b";
    String bundleAB = "all org.pairpulse.alert.bundle.raised pairs/a/b";
    AlertTimeline one = new AlertTimeline(List.of("1", "2", "3"), List.of(raisedAB, bundleAB, resolvedAB));
    AlertTimeline interleaved = new AlertTimeline(List.of("2", "1", "3"), List.of(bundleAB, raisedAB, resolvedAB));
    AlertTimeline reordered = new AlertTimeline(List.of("3", "1", "2"), List.of(resolvedAB, raisedAB, bundleAB));
    AlertTimeline repeated = new AlertTimeline(List.of("1", "1", "2", "3"), List.of(raisedAB, raisedAB, bundleAB,
        resolvedAB));
    assertEquals(Map.of("all emerging pairs/a/b", List.of("raised", "resolved"), "all bundle pairs/a/b",
        List.of("raised")), one.byTrack());
    assertEquals(one.byTrack(), interleaved.byTrack());
    assertFalse(one.byTrack().equals(reordered.byTrack()), "a track's own order counts");
    assertFalse(one.byTrack().equals(repeated.byTrack()), "a repeat counts");
    assertTrue(one.idsUnique());
    assertFalse(repeated.idsUnique());
  }
}
