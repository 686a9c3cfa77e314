package org.pairpulse.serve.floor;

import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.IdentityHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * A {@link PairTable} with every statistic under the {@link CohortFloor} removed: the only view of
 * a pair table that serve publishes. Immutable and safe to share between threads, like the table.
 *
 * <p>Built once per table version, linear in the number of tracked pairs (a join over the horizons by the
 * table's pair rows, or by item names for a table without rows; a horizon where nothing is held back reuses the
 * table's own lists); lookups are hash lookups or list reads. Lists keep the table's order (best first by {@link PairTable#sortMeasure()}).
 */
public final class FlooredTable {
  private final PairTable table;
  private final CohortFloor floor;
  private final List<String> horizonNames;
  /** Horizons in {@link #horizonNames}; the held lists may add the table's tracking decay after them. */
  private final int publishedCount;
  private final Map<String, Integer> horizonIndex;
  private final String evidenceHorizon;
  private final List<List<PairStats>> pairs;
  private final List<Map<String, List<PairStats>>> neighbours;
  private final List<Map<String, Estimate>> items;
  private final double[] baskets;
  private final Map<PairKey, Entry> byPair;
  private final int suppressedPairs;
  /** Per horizon index, the index of the horizon whose counts are its distinct-basket evidence. */
  private final int[] evidenceOf;
  /** Per horizon index, the window horizons whose lower bounds are its evidence (see {@link #passes}). */
  private final int[][] evidenceWindows;
  private final java.util.concurrent.ConcurrentHashMap<Object, Object> derived = new java.util.concurrent.ConcurrentHashMap<>();

  /** A pair's statistics in each horizon (null where absent from that horizon). */
  private record Entry(PairStats[] stats) {}

  private FlooredTable(PairTable table, CohortFloor floor) {
    this.table = table;
    this.floor = floor;
    this.horizonNames = table.horizonNames();
    List<String> heldNames = new ArrayList<>(horizonNames);
    if (table.horizon(PairTable.TRACKING_HORIZON).isPresent()) {
      heldNames.add(PairTable.TRACKING_HORIZON); // drift's reference: floored like the others, not listed
    }
    this.publishedCount = horizonNames.size();
    int horizonCount = heldNames.size();
    Map<String, Integer> index = new HashMap<>();
    for (int h = 0; h < horizonCount; h++) {
      index.put(heldNames.get(h), h);
    }
    this.horizonIndex = Map.copyOf(index);
    this.evidenceHorizon = longestWindow(horizonNames, floor);
    int evidence = evidenceHorizon == null ? -1 : index.get(evidenceHorizon);
    this.evidenceOf = new int[horizonCount];
    this.evidenceWindows = new int[horizonCount][];
    for (int h = 0; h < horizonCount; h++) {
      evidenceOf[h] = floor.isWindow(heldNames.get(h)) || evidence < 0 ? h : evidence;
      evidenceWindows[h] = containedWindows(heldNames, evidenceOf[h], floor);
    }

    // the join: every pair's statistics over the horizons (pair lookups, decay evidence); by row when the table
    // has rows (a refresh's), else by item names
    List<PairTable.PairRows> rows = new ArrayList<>(horizonCount);
    for (String name : heldNames) {
      table.pairRows(name).ifPresent(rows::add);
    }
    boolean byRow = rows.size() == horizonCount;
    Map<PairKey, Entry> all = new HashMap<>(Math.max(16, table.pairCount() * 2));
    Entry[] entryOfRow = null;
    if (byRow) {
      int rowCount = horizonCount == 0 ? 0 : rows.get(0).rows().size();
      entryOfRow = new Entry[rowCount];
      for (int r = 0; r < rowCount; r++) {
        Entry entry = null;
        for (int h = 0; h < horizonCount; h++) {
          PairStats stats = rows.get(h).rows().get(r);
          if (stats != null) {
            if (entry == null) {
              entry = new Entry(new PairStats[horizonCount]);
              all.put(PairKey.of(stats.itemA(), stats.itemB()), entry);
            }
            entry.stats()[h] = stats;
          }
        }
        entryOfRow[r] = entry;
      }
    } else {
      for (int h = 0; h < horizonCount; h++) {
        for (PairStats stats : table.pairs(heldNames.get(h))) {
          PairKey key = PairKey.of(stats.itemA(), stats.itemB());
          Entry entry = all.get(key);
          if (entry == null) {
            entry = new Entry(new PairStats[horizonCount]);
            all.put(key, entry);
          }
          entry.stats()[h] = stats;
        }
      }
    }
    this.byPair = all;

    // per horizon: what passes, in the table's order; lists are reused as they are when nothing is held back
    this.pairs = new ArrayList<>(horizonCount);
    this.neighbours = new ArrayList<>(horizonCount);
    this.items = new ArrayList<>(horizonCount);
    this.baskets = new double[horizonCount];
    int suppressed = 0;
    for (int h = 0; h < horizonCount; h++) {
      String name = heldNames.get(h);
      HorizonTable horizonTable = table.horizon(name).orElseThrow();
      List<PairStats> list = horizonTable.pairs();
      Set<PairStats> rejected = Collections.newSetFromMap(new IdentityHashMap<>(list.size()));
      List<PairStats> shown = new ArrayList<>(list.size());
      int[] order = byRow ? rows.get(h).order() : null;
      for (int i = 0; i < list.size(); i++) {
        PairStats stats = list.get(i);
        Entry entry = byRow ? entryOfRow[order[i]] : all.get(PairKey.of(stats.itemA(), stats.itemB()));
        if (passes(entry, h)) {
          shown.add(stats);
        } else {
          rejected.add(stats);
        }
      }
      suppressed += h < publishedCount ? rejected.size() : 0;
      if (rejected.isEmpty()) {
        pairs.add(list);
        neighbours.add(horizonTable.neighbours());
      } else {
        pairs.add(Collections.unmodifiableList(shown));
        Map<String, List<PairStats>> byItem = new HashMap<>(horizonTable.neighbours().size() * 2);
        for (Map.Entry<String, List<PairStats>> row : horizonTable.neighbours().entrySet()) {
          List<PairStats> kept = new ArrayList<>(row.getValue().size());
          for (PairStats stats : row.getValue()) {
            if (!rejected.contains(stats)) {
              kept.add(stats);
            }
          }
          if (!kept.isEmpty()) {
            byItem.put(row.getKey(), kept.size() == row.getValue().size() ? row.getValue()
                : Collections.unmodifiableList(kept));
          }
        }
        neighbours.add(byItem);
      }
      HorizonTable proofTable = table.horizon(heldNames.get(evidenceOf[h])).orElseThrow();
      Map<String, Estimate> itemCounts = new HashMap<>();
      for (Map.Entry<String, Estimate> item : horizonTable.itemCounts().entrySet()) {
        double lower = Double.NaN;
        for (int w : evidenceWindows[h]) {
          Estimate proof = table.horizon(heldNames.get(w)).orElseThrow().itemCounts().get(item.getKey());
          lower = proof == null ? lower : Double.isNaN(lower) ? proof.lower() : Math.max(lower, proof.lower());
        }
        if (!Double.isNaN(lower) && floor.passes(lower)) {
          itemCounts.put(item.getKey(), item.getValue());
        }
      }
      items.add(itemCounts);
      baskets[h] = floor.passes(proofTable.baskets()) ? horizonTable.baskets() : Double.NaN;
    }
    this.suppressedPairs = suppressed;
  }

  /**
   * The floor's rule on the evidence of a pair in horizon h: n_ab and both n_a pass, each read as the largest
   * lower bound among the windows inside h's evidence window. Every window ends at the watermark, so a shorter
   * window's baskets are a subset of a longer one's and its lower bound bounds the longer one's distinct baskets
   * too; this matters for a pair admitted today, whose long window carries the admission pane's full sketch
   * error (ε·W of a day) in its lower bound while the hourly panes of a short window hold exact counts after
   * the first hour.
   */
  private boolean passes(Entry entry, int h) {
    if (entry == null) {
      return false;
    }
    double ab = Double.NaN;
    double a = Double.NaN;
    double b = Double.NaN;
    for (int w : evidenceWindows[h]) {
      PairStats proof = entry.stats()[w];
      if (proof == null) {
        continue;
      }
      ab = Double.isNaN(ab) ? proof.counts().countAB().lower() : Math.max(ab, proof.counts().countAB().lower());
      a = Double.isNaN(a) ? proof.counts().countA().lower() : Math.max(a, proof.counts().countA().lower());
      b = Double.isNaN(b) ? proof.counts().countB().lower() : Math.max(b, proof.counts().countB().lower());
    }
    return !Double.isNaN(ab) && floor.passes(ab) && floor.passes(a) && floor.passes(b);
  }

  /**
   * The horizons whose lower bounds count as evidence for horizon {@code evidence}: itself, and, when it is a
   * window, every window no longer than it (a subset of its baskets).
   */
  private static int[] containedWindows(List<String> names, int evidence, CohortFloor floor) {
    Optional<HorizonSpec> outer = floor.spec(names.get(evidence));
    List<Integer> inside = new ArrayList<>();
    inside.add(evidence);
    if (outer.isPresent() && outer.get().isWindow()) {
      for (int w = 0; w < names.size(); w++) {
        Optional<HorizonSpec> spec = floor.spec(names.get(w));
        if (w != evidence && spec.isPresent() && spec.get().isWindow()
            && spec.get().lengthMillis() <= outer.get().lengthMillis()) {
          inside.add(w);
        }
      }
    }
    return inside.stream().mapToInt(Integer::intValue).toArray();
  }

  private static String longestWindow(List<String> names, CohortFloor floor) {
    String best = null;
    long bestLength = -1;
    for (String name : names) {
      Optional<HorizonSpec> spec = floor.spec(name);
      if (spec.isPresent() && spec.get().isWindow() && spec.get().lengthMillis() > bestLength) {
        best = name;
        bestLength = spec.get().lengthMillis();
      }
    }
    return best;
  }

  /** The floored view of {@code table}. */
  public static FlooredTable of(PairTable table, CohortFloor floor) {
    return new FlooredTable(Objects.requireNonNull(table, "table"), Objects.requireNonNull(floor, "floor"));
  }

  /** The table underneath (unfloored: never publish from it directly). */
  public PairTable table() {
    return table;
  }

  public CohortFloor floor() {
    return floor;
  }

  public long version() {
    return table.version();
  }

  /** Horizon names in configuration order. */
  public List<String> horizonNames() {
    return horizonNames;
  }

  /** Whether {@code horizon} is held: one of {@link #horizonNames()}, or the table's tracking decay. */
  public boolean hasHorizon(String horizon) {
    return horizonIndex.containsKey(horizon);
  }

  /** The longest window horizon, whose counts are the distinct-basket evidence of decay horizons; empty if none. */
  public Optional<String> evidenceHorizon() {
    return Optional.ofNullable(evidenceHorizon);
  }

  /** Published pairs of a horizon, best first; empty for an unknown horizon. */
  public List<PairStats> pairs(String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? List.of() : pairs.get(h);
  }

  /** Published neighbours of {@code item} in a horizon, best first; empty when unknown or suppressed. */
  public List<PairStats> neighbours(String item, String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? List.of() : neighbours.get(h).getOrDefault(item, List.of());
  }

  /** The pair {a, b} in a horizon, if tracked and published. */
  public Optional<PairStats> pair(String a, String b, String horizon) {
    Integer h = horizonIndex.get(horizon);
    if (h == null || a.equals(b)) {
      return Optional.empty();
    }
    Entry entry = byPair.get(PairKey.of(a, b));
    if (entry == null || entry.stats()[h] == null || !passes(entry, h)) {
      return Optional.empty();
    }
    return Optional.of(entry.stats()[h]);
  }

  /** n_a of a tracked, published item in a horizon. */
  public Optional<Estimate> itemCount(String item, String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? Optional.empty() : Optional.ofNullable(items.get(h).get(item));
  }

  /** Published items of a horizon with their n_a (unordered). */
  public Map<String, Estimate> items(String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? Map.of() : Collections.unmodifiableMap(items.get(h));
  }

  /** N of a horizon, or NaN when the horizon is unknown or N is under the floor. */
  public double baskets(String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? Double.NaN : baskets[h];
  }

  /** The half-life of a held decay horizon; 0 for a window or an unknown horizon. */
  public long halfLifeMillis(String horizon) {
    return table.horizon(horizon).map(HorizonTable::halfLifeMillis).orElse(0L);
  }

  /** Published pairs summed over horizons. */
  public int publishedPairs() {
    int sum = 0;
    for (int h = 0; h < publishedCount; h++) {
      sum += pairs.get(h).size();
    }
    return sum;
  }

  /**
   * A structure derived from this table (an index, a ranking), built once by {@code build} on first
   * use and kept as long as the table: readers of the same version share it. {@code key} must
   * identify the structure and its settings.
   */
  @SuppressWarnings("unchecked")
  public <T> T derived(Object key, java.util.function.Function<FlooredTable, T> build) {
    Object value = derived.get(key);
    if (value == null) {
      value = build.apply(this);
      Object raced = derived.putIfAbsent(key, value);
      if (raced != null) {
        value = raced;
      }
    }
    return (T) value;
  }

  /** Pair-horizon statistics held back by the floor. */
  public int suppressedPairs() {
    return suppressedPairs;
  }
}
