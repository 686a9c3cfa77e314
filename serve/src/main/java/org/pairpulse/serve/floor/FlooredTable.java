package org.pairpulse.serve.floor;

import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicReferenceArray;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * A {@link PairTable} with every statistic under the {@link CohortFloor} removed: the only view of
 * a pair table that serve publishes. Immutable and safe to share between threads, like the table.
 *
 * <p>Computed on read, like the table: a pair's horizons are joined by the table's rows, the floor's rule reads
 * counts only ({@link #publishes}), and each list (a horizon's pairs, an item's neighbours, a horizon's items) is
 * filtered from the table's when a reader first asks for it, then kept for this version. Lists keep the table's order
 * (best first by {@link PairTable#sortMeasure()}).
 */
public final class FlooredTable {
  private final PairTable table;
  private final CohortFloor floor;
  private final List<String> horizonNames;
  /** Horizons in {@link #horizonNames}; the held ones may add the table's tracking decay after them. */
  private final int publishedCount;
  private final Map<String, Integer> horizonIndex;
  private final HorizonTable[] held;
  private final String evidenceHorizon;
  private final double[] baskets;
  /** Per horizon index, the index of the horizon whose counts are its distinct-basket evidence. */
  private final int[] evidenceOf;
  /** Per horizon index, the window horizons whose lower bounds are its evidence (see {@link #passes}). */
  private final int[][] evidenceWindows;
  private final AtomicReferenceArray<List<PairStats>> pairs;
  private final List<Map<String, List<PairStats>>> neighbours;
  private final AtomicReferenceArray<Map<String, Estimate>> items;
  /** {published pairs, suppressed pairs} summed over the published horizons, counted on first read. */
  private volatile int[] tally;
  private final java.util.concurrent.ConcurrentHashMap<Object, Object> derived = new java.util.concurrent.ConcurrentHashMap<>();

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
    this.held = new HorizonTable[horizonCount];
    for (int h = 0; h < horizonCount; h++) {
      index.put(heldNames.get(h), h);
      held[h] = table.horizon(heldNames.get(h)).orElseThrow();
    }
    this.horizonIndex = Map.copyOf(index);
    this.evidenceHorizon = longestWindow(horizonNames, floor);
    int evidence = evidenceHorizon == null ? -1 : index.get(evidenceHorizon);
    this.evidenceOf = new int[horizonCount];
    this.evidenceWindows = new int[horizonCount][];
    this.baskets = new double[horizonCount];
    for (int h = 0; h < horizonCount; h++) {
      evidenceOf[h] = floor.isWindow(heldNames.get(h)) || evidence < 0 ? h : evidence;
      evidenceWindows[h] = containedWindows(heldNames, evidenceOf[h], floor);
      baskets[h] = floor.passes(held[evidenceOf[h]].baskets()) ? held[h].baskets() : Double.NaN;
    }
    this.pairs = new AtomicReferenceArray<>(horizonCount);
    this.items = new AtomicReferenceArray<>(horizonCount);
    this.neighbours = new ArrayList<>(horizonCount);
    for (int h = 0; h < horizonCount; h++) {
      neighbours.add(new ConcurrentHashMap<>());
    }
  }

  /**
   * Whether row {@code row} of the table is published in {@code horizon}: present there, and its evidence passes the
   * floor (counts only: no measures are computed). False for an unknown horizon.
   */
  public boolean publishes(String horizon, int row) {
    Integer h = horizonIndex.get(horizon);
    return h != null && held[h].present(row) && passes(row, h);
  }

  /** The floored pairs of horizon h in the table's order. */
  private List<PairStats> floored(int h) {
    List<PairStats> list = pairs.get(h);
    if (list == null) {
      int[] order = held[h].order();
      List<PairStats> shown = new ArrayList<>(order.length);
      for (int row : order) {
        if (passes(row, h)) {
          shown.add(held[h].row(row));
        }
      }
      List<PairStats> all = held[h].pairs();
      list = shown.size() == all.size() ? all : Collections.unmodifiableList(shown);
      pairs.compareAndSet(h, null, list);
      list = pairs.get(h);
    }
    return list;
  }

  private List<PairStats> flooredNeighbours(int h, String item) {
    int[] rows = held[h].neighbourRows(item);
    List<PairStats> kept = new ArrayList<>(rows.length);
    for (int row : rows) {
      if (passes(row, h)) {
        kept.add(held[h].row(row));
      }
    }
    return kept.isEmpty() ? List.of() : Collections.unmodifiableList(kept);
  }

  private Map<String, Estimate> flooredItems(int h) {
    Map<String, Estimate> map = items.get(h);
    if (map == null) {
      Map<String, Estimate> itemCounts = new HashMap<>();
      List<Map<String, Estimate>> proofs = proofItems(h);
      for (Map.Entry<String, Estimate> item : held[h].itemCounts().entrySet()) {
        double lower = Double.NaN;
        for (Map<String, Estimate> proofMap : proofs) {
          Estimate proof = proofMap.get(item.getKey());
          lower = proof == null ? lower : Double.isNaN(lower) ? proof.lower() : Math.max(lower, proof.lower());
        }
        if (!Double.isNaN(lower) && floor.passes(lower)) {
          itemCounts.put(item.getKey(), item.getValue());
        }
      }
      items.compareAndSet(h, null, itemCounts);
      map = items.get(h);
    }
    return map;
  }

  private List<Map<String, Estimate>> proofItems(int h) {
    List<Map<String, Estimate>> proofs = new ArrayList<>(evidenceWindows[h].length);
    for (int w : evidenceWindows[h]) {
      proofs.add(held[w].itemCounts());
    }
    return proofs;
  }

  /** {published, suppressed} over the published horizons: a pass over the rows' counts. */
  private int[] tally() {
    int[] t = tally;
    if (t == null) {
      int published = 0;
      int suppressed = 0;
      for (int h = 0; h < publishedCount; h++) {
        for (int row = 0; row < held[h].rowCount(); row++) {
          if (held[h].present(row)) {
            if (passes(row, h)) {
              published++;
            } else {
              suppressed++;
            }
          }
        }
      }
      t = new int[] {published, suppressed};
      tally = t;
    }
    return t;
  }

  /**
   * The floor's rule on the evidence of a pair in horizon h: n_ab and both n_a pass, each read as the largest
   * lower bound among the windows inside h's evidence window. Every window ends at the watermark, so a shorter
   * window's baskets are a subset of a longer one's and its lower bound bounds the longer one's distinct baskets
   * too; this matters for a pair admitted today, whose long window carries the admission pane's full sketch
   * error (ε·W of a day) in its lower bound while the hourly panes of a short window hold exact counts after
   * the first hour.
   */
  private boolean passes(int row, int h) {
    double ab = Double.NaN;
    double a = Double.NaN;
    double b = Double.NaN;
    for (int w : evidenceWindows[h]) {
      HorizonTable proof = held[w];
      if (!proof.present(row)) {
        continue;
      }
      double proofAB = proof.countAB(row).lower();
      double proofA = proof.countA(row).lower();
      double proofB = proof.countB(row).lower();
      ab = Double.isNaN(ab) ? proofAB : Math.max(ab, proofAB);
      a = Double.isNaN(a) ? proofA : Math.max(a, proofA);
      b = Double.isNaN(b) ? proofB : Math.max(b, proofB);
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
    return h == null ? List.of() : floored(h);
  }

  /** Published neighbours of {@code item} in a horizon, best first; empty when unknown or suppressed. */
  public List<PairStats> neighbours(String item, String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? List.of() : neighbours.get(h).computeIfAbsent(item, i -> flooredNeighbours(h, i));
  }

  /** The pair {a, b} in a horizon, if tracked and published. */
  public Optional<PairStats> pair(String a, String b, String horizon) {
    Integer h = horizonIndex.get(horizon);
    if (h == null || a.equals(b)) {
      return Optional.empty();
    }
    int row = held[h].rowOf(a, b);
    if (row < 0 || !held[h].present(row) || !passes(row, h)) {
      return Optional.empty();
    }
    return Optional.of(held[h].row(row));
  }

  /** n_a of a tracked, published item in a horizon. */
  public Optional<Estimate> itemCount(String item, String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? Optional.empty() : Optional.ofNullable(flooredItems(h).get(item));
  }

  /** Published items of a horizon with their n_a (unordered). */
  public Map<String, Estimate> items(String horizon) {
    Integer h = horizonIndex.get(horizon);
    return h == null ? Map.of() : Collections.unmodifiableMap(flooredItems(h));
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
    return tally()[0];
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
    return tally()[1];
  }
}
