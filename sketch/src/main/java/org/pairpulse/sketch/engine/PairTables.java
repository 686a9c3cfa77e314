package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/** Builds immutable {@link PairTable}s from an engine (the refresh). */
public final class PairTables {
  private PairTables() {}

  /**
   * What a refresh publishes.
   *
   * @param version the table's version; must grow from one refresh to the next
   * @param publishedAtMillis wall-clock time of the refresh (from the injected clock)
   * @param settings settings of the measures (interval level, shrinkage, bundle threshold)
   * @param sortBy the measure that orders pairs and neighbour lists
   * @param minPairCount pairs whose n_ab (upper bound) in a horizon is below this are left out of that horizon
   */
  public record Options(long version, long publishedAtMillis, MeasureSettings settings, Measure sortBy,
      double minPairCount) {
    public Options {
      Objects.requireNonNull(settings, "settings");
      Objects.requireNonNull(sortBy, "sortBy");
      if (version <= 0) {
        throw new IllegalArgumentException("version must be > 0, got " + version);
      }
      if (!(minPairCount >= 0)) {
        throw new IllegalArgumentException("minPairCount must be >= 0, got " + minPairCount);
      }
    }

    /** Default settings, sorted by shrunk lift, every tracked pair with a positive n_ab. */
    public static Options of(long version, long publishedAtMillis) {
      return new Options(version, publishedAtMillis, MeasureSettings.defaults(), Measure.SHRUNK_LIFT, 0.0);
    }
  }

  static PairTable build(PairEngine engine, Options options) {
    Map<String, HorizonTable> tables = new LinkedHashMap<>();
    List<String> names = new ArrayList<>();
    for (int h = 0; h < engine.publishedHorizons; h++) {
      HorizonState state = engine.horizons[h];
      tables.put(state.spec.name(), horizonTable(engine, state, options));
      names.add(state.spec.name());
    }
    // the tracking decay: drift's reference period (a long decay read from the wide decay sketches), kept out of
    // the horizon names so that it is not offered for ranking or suggestions
    HorizonState tracking = engine.horizons[engine.trackingHorizon];
    tables.put(tracking.spec.name(), horizonTable(engine, tracking, options));
    return new PairTable(options.version(), options.publishedAtMillis(), engine.watermarkMillis,
        options.sortBy(), tables, names);
  }

  private static HorizonTable horizonTable(PairEngine engine, HorizonState state, Options options) {
    double baskets = Counts.baskets(engine, state);
    TrackedTable items = engine.items;
    Map<Long, Estimate> itemByHash = new HashMap<>(items.size() * 2);
    Map<String, Estimate> itemCounts = new HashMap<>(items.size() * 2);
    SizeStrata strata = SizeStrata.of(engine, state);
    Map<Long, SizeStrata.ItemClasses> classesByHash = strata == null ? Map.of() : new HashMap<>(items.size() * 2);
    for (int slot = 0; slot < items.size(); slot++) {
      Estimate count = Counts.tracked(engine, items, slot, state);
      itemByHash.put(items.keys[slot], count);
      itemCounts.put(items.labelA[slot], count);
      if (strata != null) {
        classesByHash.put(items.keys[slot], strata.item(Counts.knownByClass(engine, state, slot), count));
      }
    }
    TrackedTable pairs = engine.pairs;
    List<PairStats> stats = new ArrayList<>(pairs.size());
    for (int slot = 0; slot < pairs.size(); slot++) {
      Estimate countAB = Counts.tracked(engine, pairs, slot, state);
      if (countAB.upper() < options.minPairCount() || countAB.upper() <= 0) {
        continue;
      }
      Estimate countA = itemCount(engine, state, itemByHash, pairs.hashA[slot]);
      Estimate countB = itemCount(engine, state, itemByHash, pairs.hashB[slot]);
      PairCounts counts = new PairCounts(baskets, countA, countB, countAB);
      if (strata != null) {
        SizeStrata.ItemClasses classesA = classesByHash.get(pairs.hashA[slot]);
        SizeStrata.ItemClasses classesB = classesByHash.get(pairs.hashB[slot]);
        SizeStrata.Expectation expectation = strata.expected(classesA != null ? classesA : strata.untracked(countA),
            classesB != null ? classesB : strata.untracked(countB));
        counts = counts.withStratifiedExpected(expectation.expected(), expectation.dispersion());
      }
      stats.add(new PairStats(pairs.labelA[slot], pairs.labelB[slot], state.spec.name(), counts,
          PairMeasures.of(counts, options.settings()), pairs.admittedAtMillis[slot]));
    }
    sortBest(stats, options.sortBy());
    Map<String, List<PairStats>> neighbours = new HashMap<>();
    for (PairStats pair : stats) { // stats is sorted, so each list is sorted too
      neighbours.computeIfAbsent(pair.itemA(), k -> new ArrayList<>()).add(pair);
      neighbours.computeIfAbsent(pair.itemB(), k -> new ArrayList<>()).add(pair);
    }
    neighbours.replaceAll((item, list) -> List.copyOf(list));
    return new HorizonTable(state.spec.name(), baskets, List.copyOf(stats), neighbours, itemCounts,
        state.isWindow() ? 0L : state.spec.halfLifeMillis());
  }

  /** A pair with its sort key, computed once (a comparator that computed the measure ran it n log n times). */
  private record Keyed(double key, PairStats stats) {}

  private static final Comparator<Keyed> BEST_FIRST = Comparator.comparingDouble(Keyed::key).reversed()
      .thenComparing((Keyed k) -> k.stats().itemA()).thenComparing((Keyed k) -> k.stats().itemB());

  /** Sorts best first by {@code measure} (NaN last), ties by item names. */
  private static void sortBest(List<PairStats> stats, Measure measure) {
    List<Keyed> keyed = new ArrayList<>(stats.size());
    for (PairStats pair : stats) {
      keyed.add(new Keyed(orderKey(measure, pair), pair));
    }
    keyed.sort(BEST_FIRST);
    for (int i = 0; i < keyed.size(); i++) {
      stats.set(i, keyed.get(i).stats());
    }
  }

  /** NaN sorts last. */
  private static double orderKey(Measure measure, PairStats pair) {
    double value = measure.of(pair.measures());
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }

  private static Estimate itemCount(PairEngine engine, HorizonState state, Map<Long, Estimate> tracked, long hash) {
    Estimate count = tracked.get(hash);
    return count != null ? count : Counts.sketched(engine, state.itemSketch, state, hash);
  }
}
