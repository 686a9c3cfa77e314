package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.lang.reflect.Method;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The refresh with its memory between tables (closed panes' sums, the last order) against the slow oracle: the same
 * refresh built from the state alone ({@code PairTables.build(engine, options, null)}). On seeded streams with
 * evictions, late baskets into closed panes, panes leaving, idle advances, a merge and a restore, every table is
 * equal bit for bit: every horizon (the tracking decay too), the pairs in order, N, n_a, n_b, n_ab and E with their
 * bounds, every measure, each item's neighbours in order and the item counts.
 */
class RefreshMemoryTest {
  private static final long T0 = 1_780_000_000_000L;
  private static final long HOUR = 3_600_000L;

  static Stream<Arguments> streams() {
    return Stream.of(
        Arguments.of("evicting, 5% late by up to 3 h", 11L, 128, 64, 0.05, 3 * HOUR, false, 150),
        Arguments.of("evicting, 20% late by up to 2 days, merged and restored", 12L, 96, 48, 0.20, 48 * HOUR, true, 150),
        Arguments.of("roomy (never full: every count exact), in order", 13L, 2048, 512, 0.0, 0L, false, 900));
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("streams")
  void incrementalRefreshEqualsAFullOne(String name, long seed, int pairCapacity, int itemCapacity, double lateShare,
      long lateMillis, boolean mergeAndRestore, int basketsPerTable) {
    EngineConfig config = EngineConfig.defaults().toBuilder().trackedPairCapacity(pairCapacity)
        .trackedItemCapacity(itemCapacity).build();
    PairEngine engine = new PairEngine(config);
    BasketStream stream = BasketStream.pairedHalves(seed, 300, 1.0, 6, 20);
    long t = T0;
    long version = 0;
    int compared = 0;
    for (int i = 0; i < 12_000; i++) {
      t += stream.random().nextLong(40_000L); // about 2.2 days in all: panes of both windows leave
      long eventMillis = stream.random().nextDouble() < lateShare ? t - stream.random().nextLong(lateMillis) : t;
      engine.addBasket(eventMillis, stream.nextBasket());
      if (i % basketsPerTable == basketsPerTable - 1) {
        if (i % 900 == 899) {
          engine.advanceTo(t + 2 * HOUR); // an idle stretch: panes leave without a basket
          t += 2 * HOUR;
        }
        assertSameTables(engine, ++version);
        compared++;
      }
      if (mergeAndRestore && i == 6_000) {
        PairEngine other = new PairEngine(config);
        BasketStream side = BasketStream.pairedHalves(seed + 100, 300, 1.0, 6, 20);
        for (int k = 0; k < 2_000; k++) {
          other.addBasket(t - side.random().nextLong(30 * HOUR), side.nextBasket());
        }
        engine.merge(other);
        assertSameTables(engine, ++version);
      }
      if (mergeAndRestore && i == 9_000) {
        engine = engine.copy(); // a restore starts with an empty memory
        assertSameTables(engine, ++version);
      }
    }
    assertEquals(12_000 / basketsPerTable, compared, "tables compared");
    // nothing changed since the last table: no closed pane is read again
    ClosedPaneSums closed = engine.refreshMemory.pairs;
    PairTables.build(engine, PairTables.Options.of(++version, 0L));
    long misses = closed.misses;
    long hits = closed.hits;
    assertSameTables(engine, ++version);
    assertEquals(misses, closed.misses, "no entry was summed again");
    if (pairCapacity < 1000) { // evicting: keys admitted late carry closed panes
      assertTrue(closed.hits > hits, "closed panes' sums reused");
    }
  }

  private static void assertSameTables(PairEngine engine, long version) {
    PairTables.Options options = new PairTables.Options(version, 0L, MeasureSettings.defaults(), Measure.SHRUNK_LIFT,
        0.0);
    PairTable incremental = PairTables.build(engine, options);
    PairTable full = PairTables.build(engine, options, null);
    assertEquals(fingerprint(full), fingerprint(incremental), "table v" + version);
  }

  /** Every number of a table as exact bits, in the table's order. */
  static List<String> fingerprint(PairTable table) {
    List<String> lines = new ArrayList<>();
    List<String> horizons = new ArrayList<>(table.horizonNames());
    horizons.add(PairTable.TRACKING_HORIZON);
    lines.add("v" + table.version() + " watermark " + table.watermarkMillis() + " " + table.horizonNames());
    for (String horizon : horizons) {
      HorizonTable h = table.horizon(horizon).orElseThrow();
      lines.add(horizon + " N " + bits(h.baskets()) + " halfLife " + h.halfLifeMillis());
      for (PairStats pair : h.pairs()) {
        lines.add(pairLine(pair));
      }
      Map<String, List<PairStats>> neighbours = new TreeMap<>(h.neighbours());
      for (Map.Entry<String, List<PairStats>> row : neighbours.entrySet()) {
        StringBuilder line = new StringBuilder("neighbours " + row.getKey() + ":");
        for (PairStats pair : row.getValue()) {
          line.append(' ').append(pair.other(row.getKey()));
          assertTrue(pair.contains(row.getKey()), "a neighbour holds its item");
        }
        lines.add(line.toString());
      }
      for (Map.Entry<String, Estimate> item : new TreeMap<>(h.itemCounts()).entrySet()) {
        lines.add("item " + item.getKey() + " " + bits(item.getValue()));
      }
    }
    return lines;
  }

  /** Every measure of {@link PairMeasures}: its public numbers and flags. */
  private static final List<Method> MEASURES = Stream.of(PairMeasures.class.getMethods())
      .filter(m -> m.getParameterCount() == 0 && (m.getReturnType() == double.class || m.getReturnType() == boolean.class))
      .sorted(java.util.Comparator.comparing(Method::getName)).toList();

  private static String pairLine(PairStats pair) {
    StringBuilder line = new StringBuilder(pair.itemA() + "+" + pair.itemB() + " since " + pair.trackedSinceMillis());
    line.append(" N ").append(bits(pair.counts().baskets())).append(" a ").append(bits(pair.counts().countA()))
        .append(" b ").append(bits(pair.counts().countB())).append(" ab ").append(bits(pair.counts().countAB()))
        .append(" E ").append(bits(pair.counts().expectedCountAB()));
    for (Method method : MEASURES) {
      {
        try {
          Object value = method.invoke(pair.measures());
          line.append(' ').append(method.getName()).append('=')
              .append(value instanceof Double d ? bits(d) : value.toString());
        } catch (ReflectiveOperationException e) {
          throw new AssertionError(e);
        }
      }
    }
    return line.toString();
  }

  private static String bits(Estimate estimate) {
    return bits(estimate.value()) + "/" + bits(estimate.lower()) + "/" + bits(estimate.upper());
  }

  private static String bits(double value) {
    return Long.toHexString(Double.doubleToLongBits(value));
  }
}
