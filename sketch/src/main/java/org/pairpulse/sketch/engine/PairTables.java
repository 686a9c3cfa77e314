package org.pairpulse.sketch.engine;

import com.carrotsearch.hppc.LongIntHashMap;
import java.util.ArrayList;
import java.util.Arrays;
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
   * The refresh: reads every count the table holds from the state (N, n_a, n_ab with bounds, the size strata) and
   * nothing more; measures, sorts and neighbour lists are computed when a reader asks ({@link HorizonTable}). With
   * {@code memory} (the engine's own, between refreshes) the closed panes of windows are read from
   * {@link ClosedPaneSums} and a horizon's sort starts from the last known order; with null everything is read from
   * the state and sorted from scratch: the slow oracle the tests compare against. The two give equal tables, bit for
   * bit, whatever a reader asks.
   */
  static PairTable build(PairEngine engine, Options options, RefreshMemory memory) {
    Map<String, HorizonTable> tables = new LinkedHashMap<>();
    Shared shared = new Shared(engine, options);
    List<String> names = new ArrayList<>();
    for (int h = 0; h < engine.publishedHorizons; h++) {
      HorizonState state = engine.horizons[h];
      tables.put(state.spec.name(), horizonTable(engine, state, shared, memory));
      names.add(state.spec.name());
    }
    // the tracking decay: drift's reference period (a long decay read from the wide decay sketches), kept out of
    // the horizon names so that it is not offered for ranking or suggestions
    HorizonState tracking = engine.horizons[engine.trackingHorizon];
    tables.put(tracking.spec.name(), horizonTable(engine, tracking, shared, memory));
    return PairTable.ofRows(options.version(), options.publishedAtMillis(), engine.watermarkMillis,
        options.sortBy(), tables, names);
  }

  /** One horizon's table: its counts, read now; the rest on read. */
  private static HorizonTable horizonTable(PairEngine engine, HorizonState state, Shared shared, RefreshMemory memory) {
    double baskets = Counts.baskets(engine, state);
    double[] scratch = new double[3];
    TrackedTable items = engine.items;
    ItemBuckets buckets = shared.buckets;
    Estimate[] itemByBucket = new Estimate[buckets.count];
    SizeStrata strata = SizeStrata.of(engine, state);
    SizeStrata.ItemClasses[] classesByBucket = strata == null ? null : new SizeStrata.ItemClasses[buckets.count];
    LiveSlots live = state.isWindow() ? LiveSlots.of(state) : null;
    // with memory, a settled key's window count is its kept closed panes' exact sum plus the newest pane's
    boolean settledSums = memory != null && live != null && live.count > 0;
    double scale = state.scaleAt(engine.watermarkMillis); // a decay's weight at the watermark, once per refresh
    for (int slot = 0; slot < items.size(); slot++) {
      Estimate count;
      double[] known;
      if (settledSums && ClosedExactSums.settled(live, admittedPane(items, slot, state))) {
        known = new double[items.classCount];
        double sum = memory.settledItems.count(state, live, items, slot, known);
        count = new Estimate(sum, sum, sum);
      } else {
        count = live == null ? Counts.trackedInDecay(items, slot, state, scale)
            : Counts.tracked(engine, items, slot, state, memory == null ? null : memory.items, scratch, live);
        known = strata == null ? null : Counts.knownByClass(engine, state, slot, live, scale);
      }
      itemByBucket[slot] = count;
      if (strata != null) {
        classesByBucket[slot] = strata.item(known, count);
      }
    }
    TrackedTable pairs = engine.pairs;
    Estimate[] countAB = new Estimate[pairs.size()];
    double minPairCount = shared.options.minPairCount();
    for (int slot = 0; slot < pairs.size(); slot++) {
      Estimate count;
      if (settledSums && ClosedExactSums.settled(live, admittedPane(pairs, slot, state))) {
        double sum = memory.settledPairs.count(state, live, pairs, slot, null);
        count = new Estimate(sum, sum, sum);
      } else {
        count = live == null ? Counts.trackedInDecay(pairs, slot, state, scale)
            : Counts.tracked(engine, pairs, slot, state, memory == null ? null : memory.pairs, scratch, live);
      }
      if (count.upper() < minPairCount || count.upper() <= 0) {
        continue;
      }
      countAB[slot] = count;
      untracked(engine, state, buckets, itemByBucket, buckets.bucketA[slot], pairs.hashA[slot]);
      untracked(engine, state, buckets, itemByBucket, buckets.bucketB[slot], pairs.hashB[slot]);
    }
    long halfLife = state.isWindow() ? 0L : state.spec.halfLifeMillis();
    return HorizonTable.ofRows(state.spec.name(), baskets, halfLife, new SnapshotRows(shared, state.spec.name(),
        baskets, countAB, itemByBucket, strata, classesByBucket, memory == null ? null : memory.lastOrder[state.index]));
  }

  /** A tracked key's admission pane in window {@code state} (Long.MIN_VALUE: counted exactly from the start). */
  private static long admittedPane(TrackedTable table, int slot, HorizonState state) {
    return table.admissionPane[slot * table.windowCount + state.kindOrdinal];
  }

  /** An untracked item's count in a horizon, read from the sketches once per bucket. */
  private static void untracked(PairEngine engine, HorizonState state, ItemBuckets buckets, Estimate[] byBucket,
      int bucket, long hash) {
    if (bucket >= buckets.tracked && byBucket[bucket] == null) {
      byBucket[bucket] = Counts.sketched(engine, state.itemSketch, state, hash);
    }
  }

  /**
   * What a refresh's horizons share, copied from the state at the refresh: each row's (tracked slot's) items, their
   * buckets and admission time, the tracked items' names; and, built on first read, the index from item names to
   * rows.
   */
  static final class Shared {
    final Options options;
    final ItemBuckets buckets;
    final String[] labelA;
    final String[] labelB;
    final long[] admittedAtMillis;
    final String[] itemNames;
    private volatile RowIndex index;

    Shared(PairEngine engine, Options options) {
      this.options = options;
      TrackedTable pairs = engine.pairs;
      this.buckets = ItemBuckets.of(pairs, engine.items);
      this.labelA = Arrays.copyOf(pairs.labelA, pairs.size());
      this.labelB = Arrays.copyOf(pairs.labelB, pairs.size());
      this.admittedAtMillis = Arrays.copyOf(pairs.admittedAtMillis, pairs.size());
      this.itemNames = Arrays.copyOf(engine.items.labelA, engine.items.size());
    }

    RowIndex index() {
      RowIndex i = index;
      if (i == null) {
        synchronized (this) {
          i = index;
          if (i == null) {
            i = new RowIndex(this);
            index = i;
          }
        }
      }
      return i;
    }
  }

  /** Item name to bucket, and each bucket's rows (compressed sparse rows). */
  static final class RowIndex {
    private final Map<String, Integer> bucketOf;
    private final int[] start;
    private final int[] rows;

    RowIndex(Shared shared) {
      ItemBuckets buckets = shared.buckets;
      int rowCount = shared.labelA.length;
      bucketOf = new HashMap<>(buckets.count * 2);
      start = new int[buckets.count + 1];
      for (int r = 0; r < rowCount; r++) {
        bucketOf.putIfAbsent(shared.labelA[r], buckets.bucketA[r]);
        bucketOf.putIfAbsent(shared.labelB[r], buckets.bucketB[r]);
        start[buckets.bucketA[r] + 1]++;
        start[buckets.bucketB[r] + 1]++;
      }
      for (int b = 0; b < buckets.count; b++) {
        start[b + 1] += start[b];
      }
      rows = new int[start[buckets.count]];
      int[] filled = start.clone();
      for (int r = 0; r < rowCount; r++) {
        rows[filled[buckets.bucketA[r]]++] = r;
        rows[filled[buckets.bucketB[r]]++] = r;
      }
    }

    int[] rowsOf(String item) {
      Integer bucket = bucketOf.get(item);
      return bucket == null ? new int[0] : Arrays.copyOfRange(rows, start[bucket], start[bucket + 1]);
    }

    int rowOf(Shared shared, String a, String b) {
      Integer bucket = bucketOf.get(a);
      if (bucket == null) {
        return -1;
      }
      for (int i = start[bucket]; i < start[bucket + 1]; i++) {
        int r = rows[i];
        if ((shared.labelA[r].equals(a) && shared.labelB[r].equals(b))
            || (shared.labelA[r].equals(b) && shared.labelB[r].equals(a))) {
          return r;
        }
      }
      return -1;
    }
  }

  /**
   * One horizon of a refresh: the counts read at the refresh, and how a row's statistics follow from them (the
   * size-adjusted E, then the measures): the computation a refresh used to run for every pair, now run for the pairs
   * a reader asks for.
   */
  private static final class SnapshotRows implements HorizonTable.Rows {
    private final Shared shared;
    private final String horizon;
    private final double baskets;
    private final Estimate[] countAB;
    private final Estimate[] itemByBucket;
    private final SizeStrata strata;
    private final SizeStrata.ItemClasses[] classesByBucket;
    /** The newest order a reader of this horizon computed, in any table of this engine; null: none (the oracle). */
    private final RefreshMemory.LastOrder lastOrder;

    SnapshotRows(Shared shared, String horizon, double baskets, Estimate[] countAB, Estimate[] itemByBucket,
        SizeStrata strata, SizeStrata.ItemClasses[] classesByBucket, RefreshMemory.LastOrder lastOrder) {
      this.shared = shared;
      this.horizon = horizon;
      this.baskets = baskets;
      this.countAB = countAB;
      this.itemByBucket = itemByBucket;
      this.strata = strata;
      this.classesByBucket = classesByBucket;
      this.lastOrder = lastOrder;
    }

    @Override
    public int rowCount() {
      return countAB.length;
    }

    @Override
    public boolean present(int row) {
      return countAB[row] != null;
    }

    @Override
    public Estimate countAB(int row) {
      return countAB[row];
    }

    @Override
    public Estimate countA(int row) {
      return itemByBucket[shared.buckets.bucketA[row]];
    }

    @Override
    public Estimate countB(int row) {
      return itemByBucket[shared.buckets.bucketB[row]];
    }

    @Override
    public PairStats stats(int row) {
      PairCounts counts = counts(row);
      return new PairStats(shared.labelA[row], shared.labelB[row], horizon, counts,
          PairMeasures.of(counts, shared.options.settings()), shared.admittedAtMillis[row]);
    }

    @Override
    public double associationPValue(int row) {
      return PairMeasures.associationPValue(counts(row));
    }

    /** A present row's counts with the size-adjusted expectation. */
    private PairCounts counts(int row) {
      int bucketA = shared.buckets.bucketA[row];
      int bucketB = shared.buckets.bucketB[row];
      Estimate countA = itemByBucket[bucketA];
      Estimate countB = itemByBucket[bucketB];
      PairCounts counts = new PairCounts(baskets, countA, countB, countAB[row]);
      if (strata != null) {
        SizeStrata.Expectation expectation = strata.expected(
            bucketA < shared.buckets.tracked ? classesByBucket[bucketA] : strata.untracked(countA),
            bucketB < shared.buckets.tracked ? classesByBucket[bucketB] : strata.untracked(countB));
        counts = counts.withStratifiedExpected(expectation.expected(), expectation.dispersion());
      }
      return counts;
    }

    /** Best first by the sort measure (NaN last), ties by item names: strict, as rows hold distinct pairs. */
    @Override
    public int compare(int rowX, PairStats x, int rowY, PairStats y) {
      Measure sortBy = shared.options.sortBy();
      int byKey = Double.compare(orderKey(sortBy, y), orderKey(sortBy, x));
      if (byKey != 0) {
        return byKey;
      }
      int byA = x.itemA().compareTo(y.itemA());
      return byA != 0 ? byA : x.itemB().compareTo(y.itemB());
    }

    @Override
    public String itemA(int row) {
      return shared.labelA[row];
    }

    @Override
    public String itemB(int row) {
      return shared.labelB[row];
    }

    @Override
    public long trackedSinceMillis(int row) {
      return shared.admittedAtMillis[row];
    }

    @Override
    public int[] rowsOf(String item) {
      return shared.index().rowsOf(item);
    }

    @Override
    public int rowOf(String itemA, String itemB) {
      return shared.index().rowOf(shared, itemA, itemB);
    }

    @Override
    public Map<String, Estimate> itemCounts() {
      Map<String, Estimate> counts = new HashMap<>(shared.itemNames.length * 2);
      for (int slot = 0; slot < shared.itemNames.length; slot++) {
        counts.put(shared.itemNames[slot], itemByBucket[slot]);
      }
      return counts;
    }

    @Override
    public int[] orderHint() {
      return lastOrder == null ? null : lastOrder.slots;
    }

    @Override
    public void sorted(int[] order) {
      if (lastOrder != null) {
        lastOrder.slots = order;
      }
    }
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

  /** NaN sorts last. */
  static double orderKey(Measure measure, PairStats pair) {
    double value = measure.of(pair.measures());
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }
}
