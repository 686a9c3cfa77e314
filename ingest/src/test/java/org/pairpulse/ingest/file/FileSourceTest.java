package org.pairpulse.ingest.file;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.OutputStream;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.PairEngine;

class FileSourceTest {
  static final long T = Instant.parse("2026-12-01T10:00:00Z").toEpochMilli();
  final EventLimits limits = EventLimits.defaults();
  final FrontSettings settings = new FrontSettings(3_600_000, 3_600_000, 1000, 60_000, 3_600_000, 1000, 50);

  @Test
  void aSinkSeesEachBasketWithItsIdAndAttributes(@TempDir Path dir) throws Exception {
    Path file = dir.resolve("orders.jsonl");
    Files.write(file, List.of(
        "{\"id\":\"o1\",\"time\":" + T + ",\"items\":[\"a\",\"b\"],\"attributes\":{\"channel\":\"app\"}}",
        "{\"basket\":\"o2\",\"time\":" + (T + 1000) + ",\"item\":\"a\"}",
        "{\"basket\":\"o2\",\"time\":" + (T + 2000) + ",\"item\":\"c\",\"end\":true}",
        "{\"id\":\"o1\",\"time\":" + T + ",\"items\":[\"a\",\"b\"]}"));
    List<String> seen = new java.util.ArrayList<>();
    BasketSink sink = BasketSink.withAttributes((basketId, eventMillis, items, attributes) ->
        seen.add(basketId + "@" + (eventMillis - T) + " " + items + " " + attributes));
    FileSource.Result result = new FileSource(limits, settings, sink, null).read(file, null);
    assertEquals(List.of("o1@0 [a, b] {channel=app}", "o2@2000 [a, c] {}"), seen,
        "whole baskets with their attributes; an assembled basket carries none, at its last line's time");
    assertEquals(2, result.baskets());
    assertEquals(1, result.duplicates());
  }

  @Test
  void jsonLinesWithBasketsLineItemsCloudEventsAndPoison(@TempDir Path dir) throws Exception {
    Path file = dir.resolve("orders.jsonl");
    Files.write(file, List.of(
        "{\"id\":\"o1\",\"time\":" + T + ",\"items\":[\"a\",\"b\"]}",
        "{\"id\":\"o1\",\"time\":" + T + ",\"items\":[\"a\",\"b\"]}",
        "",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/f\",\"type\":\"org.pairpulse.basket.v1\",\"time\":\"2026-12-01T10:01:00Z\","
            + "\"data\":{\"id\":\"o2\",\"items\":[\"b\",\"c\"]}}",
        "{\"basket\":\"o3\",\"time\":" + (T + 1000) + ",\"item\":\"a\"}",
        "{\"basket\":\"o3\",\"time\":" + (T + 2000) + ",\"item\":\"c\"}",
        "{\"id\":\"bad\",\"time\":" + T + ",\"items\":[]}",
        "{broken",
        "{\"id\":\"old\",\"time\":" + (T - 7_200_000) + ",\"items\":[\"a\"]}"));
    PairEngine engine = new PairEngine(Workload.engineConfig());
    StringWriter deadLetters = new StringWriter();
    FileSource.Result result = new FileSource(limits, settings, engine, deadLetters).read(file, null);
    assertEquals(9, result.lines());
    assertEquals(3, result.baskets(), "o1, o2 and the assembled o3");
    assertEquals(1, result.duplicates());
    assertEquals(Map.of(DeadLetterReason.EMPTY_BASKET, 1L, DeadLetterReason.MALFORMED, 1L, DeadLetterReason.LATE, 1L),
        result.deadLetters());
    assertEquals(2, engine.itemCount("a", "day").value(), 0.0);
    assertEquals(2, engine.itemCount("b", "day").value(), 0.0);
    assertEquals(1, engine.pairCount("b", "c", "day").value(), 0.0);
    assertEquals(1, engine.pairCount("a", "c", "day").value(), 0.0, "the basket assembled from line items");
    String written = deadLetters.toString();
    assertEquals(3, written.lines().count());
    assertTrue(written.contains("\"reason\":\"malformed\"") && written.contains("\"text\":\"{broken\""), written);
  }

  @Test
  void gzippedCsvWithQuotesAHeaderAndProgressReports(@TempDir Path dir) throws Exception {
    Path file = dir.resolve("lines.csv.gz");
    StringBuilder csv = new StringBuilder("basket_id,timestamp,item\n");
    int baskets = 3000;
    for (int b = 0; b < baskets; b++) {
      String time = b % 2 == 0 ? Long.toString(T + b * 1000L) : Instant.ofEpochMilli(T + b * 1000L).toString();
      csv.append("o").append(b).append(',').append(time).append(",\"sim, 20gb\"\n");
      csv.append("\"o").append(b).append("\",").append(time).append(",\"tv \"\"plus\"\"\"\n");
    }
    csv.append("o-bad,yesterday,x\n").append("only,two\n");
    try (OutputStream out = new GZIPOutputStream(Files.newOutputStream(file))) {
      out.write(csv.toString().getBytes(StandardCharsets.UTF_8));
    }
    List<long[]> updates = new ArrayList<>();
    List<long[]> finished = new ArrayList<>();
    ReadProgress progress = new ReadProgress() {
      @Override
      public void update(long bytesRead, long lines, long basketCount, long deadLetters) {
        updates.add(new long[] {bytesRead, lines, basketCount, deadLetters});
      }

      @Override
      public void finish(long bytesRead, long lines, long basketCount, long deadLetters) {
        finished.add(new long[] {bytesRead, lines, basketCount, deadLetters});
      }
    };
    PairEngine engine = new PairEngine(Workload.engineConfig());
    FileSource.Result result = new FileSource(limits, settings, engine, null).read(file, progress);
    assertEquals(baskets, result.baskets());
    assertEquals(baskets, engine.pairCount("sim, 20gb", "tv \"plus\"", "day").value(), 0.0);
    assertEquals(Map.of(DeadLetterReason.WRONG_TYPE, 1L, DeadLetterReason.MALFORMED, 1L), result.deadLetters());
    // one update every 1,024 lines (6,003 lines: 5), counts growing; one final report with the result's totals
    long lines = 1 + 2L * baskets + 2;
    assertEquals(lines / 1024, updates.size());
    for (int i = 0; i < updates.size(); i++) {
      assertEquals(1024L * (i + 1), updates.get(i)[1], "lines at update " + i);
      if (i > 0) {
        assertTrue(updates.get(i)[0] >= updates.get(i - 1)[0] && updates.get(i)[2] >= updates.get(i - 1)[2]);
      }
    }
    assertEquals(1, finished.size());
    assertArrayEquals(new long[] {Files.size(file), lines, baskets, 2}, finished.get(0));
  }

}
