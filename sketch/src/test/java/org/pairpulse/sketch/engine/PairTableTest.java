package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import org.pairpulse.sketch.time.ManualClock;

/** Refresh: published tables through the whole engine, checked on a textbook example. */
class PairTableTest {
  private static final long T0 = 1_700_000_000_000L;

  /**
   * The five-basket market-basket table of Tan, Steinbach and Kumar, Introduction to Data Mining
   * (1st ed., 2005), ch. 6, Table 6.1 (from memory): support({Diapers, Beer}) = 3/5, confidence
   * Beer ⇒ Diapers = 1, Diapers ⇒ Beer = 3/4; lift = (3/5) / ((4/5)(3/5)) = 1.25.
   */
  @Test
  void textbookFiveBasketsThroughTheEngine() {
    PairEngine engine = new PairEngine(EngineConfig.defaults());
    ManualClock clock = new ManualClock(T0);
    String[][] baskets = {{"Bread", "Milk"}, {"Bread", "Diapers", "Beer", "Eggs"}, {"Milk", "Diapers", "Beer", "Cola"},
        {"Bread", "Milk", "Diapers", "Beer"}, {"Bread", "Milk", "Diapers", "Cola"}};
    for (int i = 0; i < baskets.length; i++) {
      engine.addBasket(T0 + i * 1000L, baskets[i]);
    }
    PairTable table = engine.refresh(PairTables.Options.of(1, clock.millis()));
    PairStats diapersBeer = table.pair("Diapers", "Beer", "day").orElseThrow();
    assertEquals(5, diapersBeer.counts().baskets());
    assertEquals(0.6, diapersBeer.measures().support(), 1e-12);
    double beerToDiapers = diapersBeer.itemA().equals("Beer") ? diapersBeer.measures().confidenceAB() : diapersBeer.measures().confidenceBA();
    double diapersToBeer = diapersBeer.itemA().equals("Beer") ? diapersBeer.measures().confidenceBA() : diapersBeer.measures().confidenceAB();
    assertEquals(1.0, beerToDiapers, 1e-12);
    assertEquals(0.75, diapersToBeer, 1e-12);
    assertEquals(1.25, diapersBeer.measures().liftUnadjusted(), 1e-12);
    // size-adjusted (hand-computed): one basket of 2 items, four of 4 (class 4-5, ρ = 4·(4·12)/16² = 3/4, the slot
    // correction (k − 1)/k); Diapers and Beer only in the four: E = 3/4·4·3/4 = 2.25, lift 3/2.25 = 4/3
    assertEquals(2.25, diapersBeer.counts().expectedCountAB().value(), 1e-12);
    assertEquals(4.0 / 3, diapersBeer.measures().lift(), 1e-12);
    // {Milk, Bread}: 3 of 5 baskets, each in 4: textbook lift = 0.6 / 0.64; adjusted E = 1/2·1·1/1 + 3/4·3·3/4 = 2.1875
    PairStats milkBread = table.pair("Milk", "Bread", "baseline").orElseThrow();
    assertEquals(0.6 / 0.64, milkBread.measures().liftUnadjusted(), 1e-12);
    assertEquals(3 / 2.1875, milkBread.measures().lift(), 1e-12);
    // decayed horizon: the five lie 4 s apart in a 6 h half-life, so weights differ by < 2^(4/21600) − 1
    // ≈ 1.3e-4 and the lift stays within that of 1.25 (textbook) and of 4/3 (adjusted)
    PairStats recent = table.pair("Beer", "Diapers", "recent").orElseThrow();
    assertEquals(1.25, recent.measures().liftUnadjusted(), 1.25 * 2e-4);
    assertEquals(4.0 / 3, recent.measures().lift(), 3e-4);
    assertEquals(T0 + 4000, table.watermarkMillis());
    assertEquals(1, table.version());
    assertEquals(List.of("recent", "day", "baseline"), table.horizonNames());
    // 4 + 2 + 3 + 3 + 3 distinct pairs over the five baskets, deduplicated
    assertEquals(ExactPairs.distinct(baskets), table.pairCount());
  }

  private static final class ExactPairs {
    static int distinct(String[][] baskets) {
      java.util.Set<String> pairs = new java.util.HashSet<>();
      for (String[] b : baskets) {
        for (int i = 0; i < b.length; i++) {
          for (int j = i + 1; j < b.length; j++) {
            pairs.add(b[i].compareTo(b[j]) < 0 ? b[i] + "|" + b[j] : b[j] + "|" + b[i]);
          }
        }
      }
      return pairs.size();
    }
  }

  @Test
  void neighboursAreSortedByTheChosenMeasureAndFiltered() {
    PairEngine engine = new PairEngine(EngineConfig.defaults());
    BasketStream stream = BasketStream.pairedHalves(17, 200, 1.0, 5, 10);
    for (int i = 0; i < 5_000; i++) {
      engine.addBasket(T0 + i * 10_000L, stream.nextBasket());
    }
    for (Measure measure : List.of(Measure.LIFT, Measure.SUPPORT, Measure.SHRUNK_LIFT)) {
      PairTable table = engine.refresh(new PairTables.Options(2, T0, MeasureSettings.defaults(), measure, 3.0));
      List<PairStats> neighbours = table.neighbours("item-1", "day");
      assertFalse(neighbours.isEmpty());
      for (int i = 1; i < neighbours.size(); i++) {
        assertTrue(measure.of(neighbours.get(i - 1).measures()) >= measure.of(neighbours.get(i).measures()),
            measure + " order broken at " + i);
      }
      for (PairStats pair : table.pairs("day")) {
        assertTrue(pair.counts().countAB().upper() >= 3.0, "minPairCount filter");
      }
    }
    assertTrue(PairTable.empty().pairs("day").isEmpty());
    assertTrue(engine.refresh(PairTables.Options.of(3, T0)).neighbours("no-such-item", "day").isEmpty());
  }

  /** The threading contract: readers use published tables while the writer goes on; tables never change. */
  @Test
  void publishedTablesStayFixedWhileTheWriterContinues() throws Exception {
    EngineConfig config = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("recent", Duration.ofHours(6)), HorizonSpec.window("day", Duration.ofDays(1), 24)))
        .build();
    PairEngine engine = new PairEngine(config);
    PairTableHolder holder = new PairTableHolder();
    BasketStream stream = BasketStream.pairedHalves(23, 300, 1.0, 5, 5);
    CountDownLatch firstPublished = new CountDownLatch(1);
    AtomicReference<Throwable> readerFailure = new AtomicReference<>();
    Thread writer = new Thread(() -> {
      for (int i = 1; i <= 20_000; i++) {
        engine.addBasket(T0 + i * 1_000L, stream.nextBasket());
        if (i % 2_000 == 0) {
          holder.publish(engine.refresh(PairTables.Options.of(i / 2_000, T0 + i)));
          firstPublished.countDown();
        }
      }
    });
    Thread reader = new Thread(() -> {
      try {
        firstPublished.await();
        for (int r = 0; r < 200; r++) {
          PairTable table = holder.current();
          double before = table.horizon("day").orElseThrow().baskets();
          int pairs = table.pairs("day").size();
          Thread.yield();
          assertEquals(before, table.horizon("day").orElseThrow().baskets(), "a published table never changes");
          assertEquals(pairs, table.pairs("day").size());
        }
      } catch (Throwable t) {
        readerFailure.set(t);
      }
    });
    writer.start();
    reader.start();
    writer.join();
    reader.join();
    if (readerFailure.get() != null) {
      throw new AssertionError(readerFailure.get());
    }
    assertEquals(10, holder.current().version());
    assertFalse(holder.publish(engine.refresh(PairTables.Options.of(5, T0))), "an older version never replaces a newer one");
  }
}
