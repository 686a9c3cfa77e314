package org.pairpulse.ingest.front;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.pairpulse.ingest.event.Basket;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.LineItem;
import org.pairpulse.ingest.front.PartitionFront.Outcome;

class PartitionFrontTest {
  static final long MIN = 60_000;
  // lateness 10 min, dedupe 30 min / 1000 ids, gap 5 min, max age 20 min, 3 open, 4 items
  final FrontSettings settings = new FrontSettings(10 * MIN, 30 * MIN, 1000, 5 * MIN, 20 * MIN, 3, 4);
  final List<String> out = new ArrayList<>();
  final BasketSink sink = (id, t, items) -> out.add(id + "@" + t + items);

  static Basket basket(String id, long t, String... items) {
    return new Basket(id, t, List.of(items), Map.of());
  }

  @Test
  void eventsOlderThanTheWatermarkAreLateAndTheBoundaryIsAccepted() {
    PartitionFront front = new PartitionFront(settings);
    assertEquals(Outcome.ACCEPTED, front.accept(basket("a", 100 * MIN, "x"), sink));
    assertEquals(90 * MIN, front.watermarkMillis());
    assertEquals(Outcome.LATE, front.accept(basket("b", 90 * MIN - 1, "x"), sink));
    assertEquals(Outcome.ACCEPTED, front.accept(basket("c", 90 * MIN, "x"), sink));
    assertEquals(List.of("a@6000000[x]", "c@5400000[x]"), out);
  }

  @Test
  void duplicatesAreDroppedWithinTheHorizonOnly() {
    PartitionFront front = new PartitionFront(settings);
    assertEquals(Outcome.ACCEPTED, front.accept(basket("a", 0, "x"), sink));
    assertEquals(Outcome.DUPLICATE, front.accept(basket("a", 0, "x"), sink));
    front.accept(basket("b", 29 * MIN, "x"), sink);
    assertEquals(Outcome.DUPLICATE, front.accept(basket("a", 25 * MIN, "y"), sink), "same id, still within 30 min");
    front.accept(basket("c", 31 * MIN, "x"), sink);
    assertEquals(Outcome.ACCEPTED, front.accept(basket("a", 31 * MIN, "x"), sink), "the id was forgotten after 30 min");
    assertEquals(4, out.size());
  }

  @Test
  void lineItemsCloseOnTheEndMarkerTheGapOrTheMaximumAge() {
    PartitionFront front = new PartitionFront(settings);
    front.accept(new LineItem("o1", 0, "a", false), sink);
    front.accept(new LineItem("o1", MIN, "b", false), sink);
    front.accept(new LineItem("o1", 2 * MIN, null, true), sink);
    assertEquals(List.of("o1@120000[a, b]"), out, "the end marker closes; the time is the newest line's");
    assertEquals(Outcome.DUPLICATE, front.accept(new LineItem("o1", 2 * MIN, "c", false), sink), "a line after the close");

    front.accept(new LineItem("o2", 3 * MIN, "a", false), sink); // deadline min(3+5, 3+20) = 8 min
    front.accept(basket("z1", 18 * MIN, "q"), sink); // watermark 8 min: not yet past
    assertEquals(0, out.stream().filter(s -> s.startsWith("o2")).count());
    front.accept(basket("z2", 18 * MIN + 1, "q"), sink); // watermark 8 min + 1 ms: closes o2
    assertTrue(out.contains("o2@180000[a]"), out.toString());

    for (int k = 0; k < 8; k++) { // a line every 4 min keeps the gap open; the age of 20 min closes it
      front.accept(new LineItem("o3", 20 * MIN + k * 4 * MIN, "i" + (k % 3), false), sink);
    }
    front.accept(basket("z3", 51 * MIN, "q"), sink); // watermark 41 min > 20 + 20
    assertTrue(out.stream().anyMatch(s -> s.startsWith("o3@")), out.toString());
  }

  @Test
  void boundedOpenBasketsAndItemsPerBasket() {
    PartitionFront front = new PartitionFront(settings);
    for (int b = 0; b < 4; b++) {
      front.accept(new LineItem("o" + b, b, "a", false), sink);
    }
    assertEquals(3, front.openBaskets());
    assertEquals(1, front.forcedCloses());
    assertEquals(List.of("o0@0[a]"), out, "the open basket nearest its deadline closed early");
    for (int k = 0; k < 3; k++) {
      assertEquals(Outcome.ACCEPTED, front.accept(new LineItem("o1", 10, "x" + k, false), sink));
    }
    assertEquals(Outcome.OVERSIZED, front.accept(new LineItem("o1", 10, "y", false), sink));
    front.flush(sink);
    assertEquals(0, front.openBaskets());
    assertEquals(4, out.size());
  }

  /** A front restored from its encoding at any point decides exactly as the original does from there on. */
  @Test
  void aRestoredFrontContinuesExactlyLikeTheOriginal() {
    Random random = new Random(5);
    List<BasketEvent> events = new ArrayList<>();
    long t = 0;
    for (int i = 0; i < 3000; i++) {
      t += random.nextInt(20_000);
      long time = t - random.nextInt(12 * (int) MIN);
      int kind = random.nextInt(10);
      String id = "b" + random.nextInt(400);
      if (kind < 5) {
        events.add(basket(id, time, "i" + random.nextInt(9), "i" + random.nextInt(9)));
      } else {
        events.add(new LineItem("L" + random.nextInt(300), time, kind == 9 ? null : "i" + random.nextInt(9), kind >= 8));
      }
    }
    for (int cut : new int[] {0, 1, 777, 1500, 2999}) {
      PartitionFront original = new PartitionFront(settings);
      List<String> originalOut = new ArrayList<>();
      List<Outcome> originalOutcomes = new ArrayList<>();
      PartitionFront restored = null;
      List<String> restoredOut = new ArrayList<>();
      List<Outcome> restoredOutcomes = new ArrayList<>();
      for (int i = 0; i < events.size(); i++) {
        if (i == cut) {
          restored = PartitionFront.decode(original.encode(), settings);
          originalOut.clear();
          originalOutcomes.clear();
        }
        originalOutcomes.add(original.accept(events.get(i), (id, tt, items) -> originalOut.add(id + "@" + tt + items)));
        if (restored != null) {
          restoredOutcomes.add(restored.accept(events.get(i), (id, tt, items) -> restoredOut.add(id + "@" + tt + items)));
        }
      }
      assertEquals(originalOutcomes, restoredOutcomes, "outcomes after a restore at " + cut);
      assertEquals(originalOut, restoredOut, "baskets after a restore at " + cut);
      assertTrue(originalOutcomes.contains(Outcome.DUPLICATE) || cut > 2900, "the stream exercises dedupe");
    }
  }
}
