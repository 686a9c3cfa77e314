package org.pairpulse.serve.floor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.TreeMap;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The floored view joins a refresh's horizons by pair row; the same table without rows is joined by item names
 * (the slow, obvious way). On seeded streams, under floors that hold back none, some and most pairs, both views
 * publish the same pairs in the same order, the same neighbours, items, N and pair lookups.
 */
class FlooredTableRowsTest {
  private static final long T0 = 1_780_000_000_000L;

  @ParameterizedTest(name = "floor {0} baskets")
  @ValueSource(doubles = {0, 5, 50})
  void theJoinByRowEqualsTheJoinByNames(double minBaskets) {
    PairEngine engine = new PairEngine(EngineConfig.defaults().toBuilder().trackedPairCapacity(512)
        .trackedItemCapacity(128).build());
    SplittableRandom random = new SplittableRandom(31 + (long) minBaskets);
    long t = T0;
    for (int i = 0; i < 20_000; i++) {
      t += random.nextLong(20_000L);
      engine.addBasket(t, skewedBasket(random));
    }
    PairTable withRows = engine.refresh(PairTables.Options.of(1, 0L));
    assertTrue(withRows.pairRows("day").isPresent(), "a refresh's table has rows");
    Map<String, HorizonTable> horizons = new TreeMap<>();
    List<String> held = new ArrayList<>(withRows.horizonNames());
    held.add(PairTable.TRACKING_HORIZON);
    for (String name : held) {
      horizons.put(name, withRows.horizon(name).orElseThrow());
    }
    PairTable withoutRows = new PairTable(withRows.version(), withRows.publishedAtMillis(), withRows.watermarkMillis(),
        withRows.sortMeasure(), horizons, withRows.horizonNames());
    CohortFloor floor = CohortFloor.of(minBaskets);
    FlooredTable byRow = FlooredTable.of(withRows, floor);
    FlooredTable byName = FlooredTable.of(withoutRows, floor);
    assertEquals(byName.suppressedPairs(), byRow.suppressedPairs());
    assertEquals(byName.publishedPairs(), byRow.publishedPairs());
    if (minBaskets == 50) {
      assertTrue(byRow.suppressedPairs() > 0, "the floor holds some back");
    }
    for (String name : held) {
      assertEquals(byName.pairs(name), byRow.pairs(name), name);
      assertEquals(byName.items(name), byRow.items(name), name);
      assertEquals(byName.baskets(name), byRow.baskets(name), name);
      for (String item : withRows.horizon(name).orElseThrow().neighbours().keySet()) {
        assertEquals(byName.neighbours(item, name), byRow.neighbours(item, name), name + " " + item);
      }
      for (PairStats pair : withRows.pairs(name)) {
        for (String other : held) {
          assertEquals(byName.pair(pair.itemA(), pair.itemB(), other), byRow.pair(pair.itemB(), pair.itemA(), other));
        }
      }
    }
  }

  /** 1 to 5 of 400 items, the low numbers far more often (u^2.5). */
  private static String[] skewedBasket(SplittableRandom random) {
    String[] basket = new String[1 + random.nextInt(5)];
    for (int k = 0; k < basket.length; k++) {
      basket[k] = "item-" + (int) Math.floor(Math.pow(random.nextDouble(), 2.5) * 400);
    }
    return basket;
  }
}
