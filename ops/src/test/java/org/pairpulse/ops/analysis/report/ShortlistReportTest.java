package org.pairpulse.ops.analysis.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayInputStream;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import javax.xml.parsers.DocumentBuilder;
import javax.xml.parsers.DocumentBuilderFactory;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.table.PairTable;
import org.w3c.dom.Document;

/** The offer shortlist on hand-made tables: the lists, the cohort floor, the CSV columns, a well-formed page. */
class ShortlistReportTest {
  static final long T0 = 1_780_272_000_000L; // 2026-06-01T00:00Z
  static final long HOUR = Duration.ofHours(1).toMillis();
  static final long DAY = Duration.ofDays(1).toMillis();
  static final long AS_OF = T0 + 10 * DAY + 12 * HOUR;

  static ShortlistReport report;
  static String csv;
  static String suppressedCsv;
  static String html;

  static void repeat(PairEngine engine, int times, long atMillis, String... items) {
    for (int i = 0; i < times; i++) {
      engine.addBasket(atMillis, items);
    }
  }

  /**
   * Segment {@code all}: ten quiet days of x and y (mostly apart), then x and y together in the last hours (emerging);
   * on the last day milk and bread (200 together, 200 each alone: confidence 0.5 both ways, in the band) and tea and
   * cake (30 together, 30 each alone: in the band too, but 30 baskets are under the floor of 50); coffee ⇒ sugar
   * (confidence 0.36, in the band, but no association: coffee and sugar also sit in many other 2-item baskets, with
   * a bag, so within the size class of 2-item baskets they meet about as often as independence predicts).
   * Segment {@code channel=tiny}: 40 baskets, under the floor (milk ⇒ bread would be in the band, lift 2 within the
   * 2-item baskets, half of which are jam and bag, a bundle).
   */
  @BeforeAll
  static void build() throws Exception {
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(256).trackedItemCapacity(256).build();
    PairEngine all = new PairEngine(config);
    for (int d = 0; d < 10; d++) {
      long noon = T0 + d * DAY + 12 * HOUR;
      repeat(all, 100, noon, "x");
      repeat(all, 100, noon, "y");
      repeat(all, 5, noon, "x", "y");
      repeat(all, 500, noon, "water");
    }
    long lastDay = T0 + 10 * DAY;
    for (int h = 9; h < 12; h++) {
      repeat(all, 20, lastDay + h * HOUR, "x", "y");
    }
    repeat(all, 200, lastDay + 11 * HOUR, "water");
    repeat(all, 200, lastDay + 11 * HOUR, "milk", "bread");
    repeat(all, 200, lastDay + 11 * HOUR, "milk");
    repeat(all, 200, lastDay + 11 * HOUR, "bread");
    repeat(all, 30, lastDay + 11 * HOUR, "tea", "cake");
    repeat(all, 30, lastDay + 11 * HOUR, "tea");
    repeat(all, 30, lastDay + 11 * HOUR, "cake");
    repeat(all, 1000, lastDay + 11 * HOUR, "water");
    repeat(all, 40, lastDay + 11 * HOUR, "coffee", "sugar");
    repeat(all, 70, lastDay + 11 * HOUR, "coffee", "bag");
    repeat(all, 1000, lastDay + 11 * HOUR, "sugar", "bag");
    all.advanceTo(AS_OF);
    PairEngine tiny = new PairEngine(config);
    repeat(tiny, 10, lastDay + 11 * HOUR, "milk", "bread");
    repeat(tiny, 10, lastDay + 11 * HOUR, "milk");
    repeat(tiny, 10, lastDay + 11 * HOUR, "water");
    repeat(tiny, 10, lastDay + 11 * HOUR, "jam", "bag");
    tiny.advanceTo(AS_OF);
    Map<String, PairTable> tables = new LinkedHashMap<>();
    tables.put("all", all.refresh(PairTables.Options.of(1, AS_OF)));
    tables.put("channel=tiny", tiny.refresh(PairTables.Options.of(1, AS_OF)));
    report = ShortlistReport.build(tables, HorizonSpec.defaults(), ShortlistSettings.defaults());
    StringWriter out = new StringWriter();
    ShortlistCsv.write(report, out);
    csv = out.toString();
    out = new StringWriter();
    ShortlistCsv.writeSuppressed(report, out);
    suppressedCsv = out.toString();
    out = new StringWriter();
    ShortlistHtml.write(report, out);
    html = out.toString();
  }

  @Test
  void listsTheEmergingPairAndTheRulesInTheBand() {
    ShortlistReport.Segment all = report.segments().get(0);
    assertEquals("all", all.name());
    assertEquals(AS_OF, report.asOfMillis());
    assertEquals(1, all.emerging().size(), all.emerging().toString());
    ShortlistRow emerging = all.emerging().get(0);
    assertEquals(List.of("x", "y"), List.of(emerging.itemA(), emerging.itemB()).stream().sorted().toList());
    assertTrue(emerging.recentLift() > 1.5 * emerging.baselineLift(), emerging.toString());
    assertTrue(emerging.signedRootG2() >= 5, emerging.toString());
    assertEquals(2, all.suggestions().size(), all.suggestions().toString());
    // the offer screen: every published pair of the horizon tested, the listed ones among those that passed
    assertTrue(all.passedPairs() >= 1 && all.passedPairs() <= all.screenedPairs(), all.toString());
    assertTrue(html.contains(all.passedPairs() + " of " + all.screenedPairs() + " pairs screened"), html);
    assertTrue(csv.indexOf("coffee") < 0, "in the band, but its lift interval reaches below 1");
    for (ShortlistRow row : all.suggestions()) {
      assertEquals(List.of("bread", "milk"), List.of(row.itemA(), row.itemB()).stream().sorted().toList());
      assertEquals(0.5, row.confidence(), 1e-9);
      assertEquals(200, row.pairBaskets(), 1e-9);
      assertEquals("day", row.horizon());
      assertTrue(row.liftLower() <= row.lift() && row.lift() <= row.liftUpper());
    }
  }

  @Test
  void theFloorHidesThinRowsAndCountsThem() {
    ShortlistReport.Segment all = report.segments().get(0);
    assertEquals(2, all.suppressedRows(), "tea => cake and cake => tea");
    ShortlistReport.Segment tiny = report.segments().get(1);
    assertTrue(tiny.suppressed());
    assertTrue(tiny.emerging().isEmpty() && tiny.suggestions().isEmpty());
    assertEquals(1, tiny.suppressedRows(), "milk => bread (bread => milk has confidence 1)");
    for (String text : List.of(csv, html)) {
      assertFalse(text.contains("tea"), "no suppressed item anywhere");
      assertFalse(text.contains("cake"), "no suppressed item anywhere");
    }
    assertFalse(csv.contains("channel=tiny"), "a segment under the floor has no rows");
    assertEquals("segment,suppressed_rows,segment_under_floor\nall,2,false\nchannel=tiny,1,true\n", suppressedCsv);
    assertTrue(html.contains("Held back by the cohort floor (fewer than 50 distinct baskets behind them; not shown):"
        + " all: 2 rows; channel=tiny: 1 row (the whole segment is under the floor)."), html);
  }

  @Test
  void csvHasTheDocumentedColumns() {
    String[] lines = csv.split("\n");
    assertEquals(String.join(",", ShortlistCsv.COLUMNS), lines[0]);
    assertEquals("segment,list,rank,item_a,item_b,horizon,pair_baskets,support,confidence,lift,lift_lower,lift_upper,"
        + "recent_lift,baseline_lift,lift_ratio,signed_root_g2,drift_change,evidence", lines[0]);
    assertEquals(1 + 3, lines.length, csv);
    for (int i = 1; i < lines.length; i++) {
      String[] fields = lines[i].split(",(?=(?:[^\"]*\"[^\"]*\")*[^\"]*$)", -1); // commas outside quotes
      assertEquals(ShortlistCsv.COLUMNS.size(), fields.length, lines[i]);
      assertEquals("all", fields[0]);
    }
    assertTrue(lines[1].startsWith("all,emerging,1,"), lines[1]);
    // an emerging row says what moved and the counts behind it; a suggestion row leaves both empty
    assertTrue(lines[1].contains(",association,\"") || lines[1].contains(",both,\"") || lines[1].contains(",rate,\""),
        lines[1]);
    assertTrue(lines[1].endsWith("in the reference period)\""), lines[1]);
    assertTrue(lines[2].endsWith(",,"), lines[2]);
    assertTrue(lines[2].startsWith("all,suggestion,1,"), lines[2]);
    assertTrue(lines[3].startsWith("all,suggestion,2,"), lines[3]);
    assertEquals("0.5", lines[2].split(",")[8]);
    assertEquals("200", lines[2].split(",")[6]);
  }

  @Test
  void htmlIsWellFormedAndSelfContained() throws Exception {
    DocumentBuilderFactory factory = DocumentBuilderFactory.newInstance();
    factory.setFeature("http://apache.org/xml/features/nonvalidating/load-external-dtd", false);
    DocumentBuilder builder = factory.newDocumentBuilder();
    Document page = builder.parse(new ByteArrayInputStream(html.getBytes(StandardCharsets.UTF_8)));
    assertEquals("html", page.getDocumentElement().getTagName());
    assertEquals(2, page.getElementsByTagName("section").getLength());
    // one lift chart and one recent-vs-baseline chart per row (1 emerging + 2 suggestion rows)
    assertEquals(6, page.getElementsByTagName("svg").getLength());
    assertEquals(1, page.getElementsByTagName("footer").getLength());
    assertFalse(html.contains("<script"));
    assertFalse(html.contains("src="));
    assertFalse(html.replace("xmlns=\"http://www.w3.org/2000/svg\"", "").contains("http"), "no external resource");
  }
}
