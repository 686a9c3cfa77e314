package org.pairpulse.serve.query;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.table.PairTable;

/** The status document from plain inputs: published and unpublished tables, absent ingest, no group. */
class StatusReportTest {
  private static final StatusReport.Serving SERVING =
      new StatusReport.Serving(CohortFloor.of(50), "recent", 20, 100, false, DriftSettings.defaults());

  private static StatusReport.Health health(long nowMillis) {
    return new StatusReport.Health(IngestHealth.absent(), SketchHealth.unknown(), Optional.empty(), GroupStatus.none(),
        7, nowMillis);
  }

  @SuppressWarnings("unchecked")
  private static Map<String, Object> table(Map<String, Object> status) {
    return (Map<String, Object>) status.get("table");
  }

  @Test
  void anUnpublishedTableIsNotReadyAndHasNoTimes() {
    FlooredTable empty = FlooredTable.of(PairTable.empty(), SERVING.floor());
    Map<String, Object> s = StatusReport.of("all", empty, List.of("all"), SERVING, health(5_000));
    assertFalse((Boolean) s.get("ready"));
    assertNull(table(s).get("publishedAtMillis"));
    assertNull(table(s).get("ageMillis"));
    assertNull(table(s).get("watermarkMillis"));
    assertNull(s.get("group"));
    assertNull(s.get("evaluation"));
    @SuppressWarnings("unchecked")
    Map<String, Object> ingest = (Map<String, Object>) s.get("ingest");
    assertEquals("absent", ingest.get("state"));
    assertNull(ingest.get("lagRecords"), "a lag of -1 (unknown) is null");
    assertNull(ingest.get("watermarkMillis"), "an unset watermark is null");
    assertEquals(7, s.get("alertsRecorded"));
  }

  @Test
  void aPublishedTableCarriesItsAgeAndPerHorizonCounts() {
    // a:1000 b:1200 over 10,000 baskets; ab 400 passes the floor of 50, a–rare 25 does not
    PairTable table = Tables.defaultHorizons().baskets(10_000).item("a", 1000).item("b", 1200).item("rare", 30)
        .pair("a", "b", 400).pair("a", "rare", 25).build(4); // published at 4,000 ms (Tables: 1,000 × version)
    FlooredTable view = FlooredTable.of(table, SERVING.floor());
    Map<String, Object> s = StatusReport.of("web", view, List.of("all", "web"), SERVING, health(6_500));
    assertTrue((Boolean) s.get("ready"));
    assertEquals("web", s.get("segment"));
    assertEquals(4L, table(s).get("version"));
    assertEquals(2_500L, table(s).get("ageMillis"));
    @SuppressWarnings("unchecked")
    List<Map<String, Object>> horizons = (List<Map<String, Object>>) table(s).get("horizons");
    assertEquals(List.of("recent", "day", "baseline"), horizons.stream().map(h -> h.get("name")).toList());
    int perHorizon = 0;
    for (Map<String, Object> h : horizons) {
      assertEquals(1, h.get("publishedPairs"), "ab only: " + h);
      perHorizon += (Integer) h.get("publishedPairs");
    }
    assertEquals(perHorizon, table(s).get("publishedPairs"));
    assertEquals(3, table(s).get("suppressedPairs")); // a–rare in three horizons
    @SuppressWarnings("unchecked")
    Map<String, Object> serving = (Map<String, Object>) s.get("serving");
    assertEquals(50.0, serving.get("cohortFloor"));
    assertEquals(List.of(0.30, 0.60), serving.get("confidenceBand"));
  }
}
