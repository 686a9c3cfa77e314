package org.pairpulse.sketch.engine;

import com.carrotsearch.hppc.LongIntHashMap;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
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
    return build(engine, options, engine.refreshMemory);
  }

  /**
   * The refresh. With {@code memory} (the engine's own, between refreshes) the closed panes of windows are read
   * from {@link ClosedPaneSums} and each horizon's sort starts from the previous table's order; with null
   * everything is read from the state and sorted from scratch: the slow oracle the tests compare against. The two
   * give equal tables, bit for bit.
   */
  static PairTable build(PairEngine engine, Options options, RefreshMemory memory) {
    Map<String, HorizonTable> tables = new LinkedHashMap<>();
    Map<String, PairStats[]> rows = new HashMap<>();
    Map<String, int[]> orders = new HashMap<>();
    ItemBuckets buckets = ItemBuckets.of(engine.pairs, engine.items);
    List<String> names = new ArrayList<>();
    for (int h = 0; h < engine.publishedHorizons; h++) {
      HorizonState state = engine.horizons[h];
      tables.put(state.spec.name(), horizonTable(engine, state, options, memory, buckets, rows, orders));
      names.add(state.spec.name());
    }
    // the tracking decay: drift's reference period (a long decay read from the wide decay sketches), kept out of
    // the horizon names so that it is not offered for ranking or suggestions
    HorizonState tracking = engine.horizons[engine.trackingHorizon];
    tables.put(tracking.spec.name(), horizonTable(engine, tracking, options, memory, buckets, rows, orders));
    return new PairTable(options.version(), options.publishedAtMillis(), engine.watermarkMillis,
        options.sortBy(), tables, names, rows, orders);
  }

  /** One horizon's table; its pairs by row (the tracked slot) go into {@code rows}, their order into {@code orders}. */
  private static HorizonTable horizonTable(PairEngine engine, HorizonState state, Options options,
      RefreshMemory memory, ItemBuckets buckets, Map<String, PairStats[]> rows, Map<String, int[]> orders) {
    double baskets = Counts.baskets(engine, state);
    double[] scratch = new double[3];
    TrackedTable items = engine.items;
    Estimate[] itemBySlot = new Estimate[items.size()];
    Map<String, Estimate> itemCounts = new HashMap<>(items.size() * 2);
    SizeStrata strata = SizeStrata.of(engine, state);
    SizeStrata.ItemClasses[] classesBySlot = strata == null ? null : new SizeStrata.ItemClasses[items.size()];
    for (int slot = 0; slot < items.size(); slot++) {
      Estimate count = Counts.tracked(engine, items, slot, state, memory == null ? null : memory.items, scratch);
      itemBySlot[slot] = count;
      itemCounts.put(items.labelA[slot], count);
      if (strata != null) {
        classesBySlot[slot] = strata.item(Counts.knownByClass(engine, state, slot), count);
      }
    }
    TrackedTable pairs = engine.pairs;
    PairStats[] bySlot = new PairStats[pairs.size()];
    double[] keyBySlot = new double[pairs.size()];
    int published = 0;
    for (int slot = 0; slot < pairs.size(); slot++) {
      Estimate countAB = Counts.tracked(engine, pairs, slot, state, memory == null ? null : memory.pairs, scratch);
      if (countAB.upper() < options.minPairCount() || countAB.upper() <= 0) {
        continue;
      }
      int slotA = buckets.trackedA(slot);
      int slotB = buckets.trackedB(slot);
      Estimate countA = slotA >= 0 ? itemBySlot[slotA] : Counts.sketched(engine, state.itemSketch, state, pairs.hashA[slot]);
      Estimate countB = slotB >= 0 ? itemBySlot[slotB] : Counts.sketched(engine, state.itemSketch, state, pairs.hashB[slot]);
      PairCounts counts = new PairCounts(baskets, countA, countB, countAB);
      if (strata != null) {
        SizeStrata.Expectation expectation = strata.expected(
            slotA >= 0 ? classesBySlot[slotA] : strata.untracked(countA),
            slotB >= 0 ? classesBySlot[slotB] : strata.untracked(countB));
        counts = counts.withStratifiedExpected(expectation.expected(), expectation.dispersion());
      }
      PairStats stats = new PairStats(pairs.labelA[slot], pairs.labelB[slot], state.spec.name(), counts,
          PairMeasures.of(counts, options.settings()), pairs.admittedAtMillis[slot]);
      bySlot[slot] = stats;
      keyBySlot[slot] = orderKey(options.sortBy(), stats);
      published++;
    }
    int[] order = sortBest(bySlot, keyBySlot, published, memory == null ? null : memory.lastOrder[state.index]);
    if (memory != null) {
      memory.lastOrder[state.index] = order;
    }
    rows.put(state.spec.name(), bySlot);
    orders.put(state.spec.name(), order);
    PairStats[] sorted = new PairStats[order.length];
    for (int i = 0; i < order.length; i++) {
      sorted[i] = bySlot[order[i]];
    }
    return new HorizonTable(state.spec.name(), baskets, Arrays.asList(sorted), neighbours(buckets, order, sorted),
        itemCounts, state.isWindow() ? 0L : state.spec.halfLifeMillis());
  }

  /**
   * Each item's published pairs in table order: counted per item bucket, then filled, in two passes over the
   * sorted pairs, one map entry per item.
   */
  private static Map<String, List<PairStats>> neighbours(ItemBuckets buckets, int[] order, PairStats[] sorted) {
    int[] sizes = new int[buckets.count];
    for (int slot : order) {
      sizes[buckets.bucketA[slot]]++;
      sizes[buckets.bucketB[slot]]++;
    }
    PairStats[][] lists = new PairStats[buckets.count][];
    int[] filled = new int[buckets.count];
    Map<String, List<PairStats>> neighbours = new HashMap<>(buckets.count * 2);
    for (int i = 0; i < order.length; i++) { // sorted order: each list is sorted too
      add(lists, sizes, filled, buckets.bucketA[order[i]], sorted[i], sorted[i].itemA(), neighbours);
      add(lists, sizes, filled, buckets.bucketB[order[i]], sorted[i], sorted[i].itemB(), neighbours);
    }
    return neighbours;
  }

  /**
   * Each tracked pair's two items as buckets, looked up once per refresh for every horizon: a tracked item's
   * bucket is its slot, an untracked item's one past the tracked ones (one per distinct hash).
   */
  private static final class ItemBuckets {
    final int[] bucketA;
    final int[] bucketB;
    final int tracked;
    int count;

    private ItemBuckets(int pairs, int tracked) {
      this.bucketA = new int[pairs];
      this.bucketB = new int[pairs];
      this.tracked = tracked;
      this.count = tracked;
    }

    static ItemBuckets of(TrackedTable pairs, TrackedTable items) {
      ItemBuckets buckets = new ItemBuckets(pairs.size(), items.size());
      LongIntHashMap untracked = new LongIntHashMap();
      for (int slot = 0; slot < pairs.size(); slot++) {
        buckets.bucketA[slot] = buckets.bucket(items, untracked, pairs.hashA[slot]);
        buckets.bucketB[slot] = buckets.bucket(items, untracked, pairs.hashB[slot]);
      }
      return buckets;
    }

    private int bucket(TrackedTable items, LongIntHashMap untracked, long hash) {
      int bucket = items.find(hash);
      if (bucket < 0) {
        bucket = untracked.getOrDefault(hash, -1);
        if (bucket < 0) {
          bucket = count++;
          untracked.put(hash, bucket);
        }
      }
      return bucket;
    }

    /** The tracked slot of pair {@code slot}'s first item, or −1. */
    int trackedA(int slot) {
      return bucketA[slot] < tracked ? bucketA[slot] : -1;
    }

    int trackedB(int slot) {
      return bucketB[slot] < tracked ? bucketB[slot] : -1;
    }
  }

  private static void add(PairStats[][] lists, int[] sizes, int[] filled, int bucket, PairStats stats, String item,
      Map<String, List<PairStats>> neighbours) {
    if (lists[bucket] == null) {
      lists[bucket] = new PairStats[sizes[bucket]];
      neighbours.put(item, Collections.unmodifiableList(Arrays.asList(lists[bucket])));
    }
    lists[bucket][filled[bucket]++] = stats;
  }

  /**
   * The slots of the {@code published} non-null pairs, best first by {@code key} (NaN last, as
   * {@link #orderKey}), ties by item names. The order is strict, so the result does not depend on where the sort
   * starts; starting from the previous table's order ({@code previous}, or null) makes it nearly sorted already, and
   * the merge sort (adaptive) runs in about one comparison per pair.
   */
  private static int[] sortBest(PairStats[] bySlot, double[] key, int published, int[] previous) {
    Integer[] order = new Integer[published];
    boolean[] placed = new boolean[bySlot.length];
    int n = 0;
    if (previous != null) {
      for (int slot : previous) {
        if (slot < bySlot.length && bySlot[slot] != null) {
          order[n++] = slot;
          placed[slot] = true;
        }
      }
    }
    for (int slot = 0; slot < bySlot.length; slot++) {
      if (bySlot[slot] != null && !placed[slot]) {
        order[n++] = slot;
      }
    }
    Arrays.sort(order, (x, y) -> {
      int byKey = Double.compare(key[y], key[x]);
      if (byKey != 0) {
        return byKey;
      }
      int byA = bySlot[x].itemA().compareTo(bySlot[y].itemA());
      return byA != 0 ? byA : bySlot[x].itemB().compareTo(bySlot[y].itemB());
    });
    int[] slots = new int[published];
    for (int i = 0; i < published; i++) {
      slots[i] = order[i];
    }
    return slots;
  }

  /** NaN sorts last. */
  static double orderKey(Measure measure, PairStats pair) {
    double value = measure.of(pair.measures());
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }
}
