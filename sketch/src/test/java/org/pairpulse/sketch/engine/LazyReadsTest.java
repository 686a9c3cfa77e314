package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.TreeSet;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * A refresh's table computes measures, sorts and neighbour lists on read. Whatever a reader asks first (one item's
 * neighbours, one pair, a row, two rows' order) gives what the whole table holds once everything is read, and the
 * table read piece by piece equals, bit for bit, a second table of the same state read whole
 * ({@link RefreshMemoryTest#fingerprint}, the slow obvious reading: every horizon's full sort and neighbour map).
 */
class LazyReadsTest {
  private static final long T0 = 1_780_000_000_000L;

  @ParameterizedTest(name = "seed {0}")
  @ValueSource(longs = {21, 22, 23})
  void readingPieceByPieceEqualsReadingWhole(long seed) {
    PairEngine engine = new PairEngine(EngineConfig.defaults().toBuilder().trackedPairCapacity(256)
        .trackedItemCapacity(96).build());
    BasketStream stream = BasketStream.pairedHalves(seed, 200, 1.0, 6, 20);
    long t = T0;
    for (int i = 0; i < 6_000; i++) {
      t += stream.random().nextLong(30_000L);
      engine.addBasket(t, stream.nextBasket());
    }
    PairTables.Options options = PairTables.Options.of(1, 0L);
    PairTable lazy = PairTables.build(engine, options, null);
    PairTable whole = PairTables.build(engine, options, null);
    List<String> horizons = new ArrayList<>(whole.horizonNames());
    horizons.add(PairTable.TRACKING_HORIZON);
    for (String name : horizons) {
      HorizonTable pieces = lazy.horizon(name).orElseThrow();
      HorizonTable all = whole.horizon(name).orElseThrow();
      Map<String, List<PairStats>> neighbours = all.neighbours();
      TreeSet<String> items = new TreeSet<>(all.itemCounts().keySet());
      items.add("no-such-item");
      for (String item : items) { // one item's list, before its horizon is sorted
        assertEquals(names(neighbours.getOrDefault(item, List.of())), names(pieces.neighboursOf(item)),
            name + " " + item);
      }
      for (PairStats pair : all.pairs()) { // one pair, by name, in either order
        Optional<PairStats> found = lazy.pair(pair.itemB(), pair.itemA(), name);
        assertTrue(found.isPresent(), name + " " + pair.itemA() + "+" + pair.itemB());
        // toString prints every double so that it reads back exactly (Double.toString)
        assertEquals(pair.counts().toString(), found.get().counts().toString());
        assertEquals(pair.measures().toString(), found.get().measures().toString());
        int row = pieces.rowOf(pair.itemA(), pair.itemB());
        assertSame(found.get(), pieces.row(row), "a row is computed once and kept");
      }
      assertEquals(Optional.empty(), lazy.pair("no-such-item", "another", name));
      int[] order = all.order();
      for (int i = 1; i < order.length; i++) { // two rows' order without a sort
        assertTrue(pieces.compareRows(order[i - 1], order[i]) < 0, name + " order at " + i);
      }
      pieces.order(); // sorted now: an item's rows follow from their places in the order
      for (String item : items) {
        List<PairStats> byPlace = new ArrayList<>();
        for (int row : pieces.neighbourRows(item)) {
          byPlace.add(pieces.row(row));
        }
        assertEquals(names(neighbours.getOrDefault(item, List.of())), names(byPlace), name + " " + item + " by place");
      }
      for (int row = 0; row < pieces.rowCount(); row++) {
        if (!pieces.present(row)) {
          assertNull(pieces.row(row));
        }
      }
    }
    assertEquals(RefreshMemoryTest.fingerprint(whole), RefreshMemoryTest.fingerprint(lazy));
    assertEquals(whole.pairCount(), lazy.pairCount());
  }

  private static List<String> names(List<PairStats> pairs) {
    List<String> names = new ArrayList<>();
    for (PairStats pair : pairs) {
      names.add(pair.itemA() + "+" + pair.itemB() + " " + pair.measures().shrunkLift());
    }
    return names;
  }
}
