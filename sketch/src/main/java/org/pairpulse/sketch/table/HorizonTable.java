package org.pairpulse.sketch.table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicReferenceArray;
import org.pairpulse.sketch.stats.Estimate;

/**
 * One horizon's part of a pair table: N, the tracked items' counts, every tracked pair's statistics (sorted by the
 * table's measure, best first) and each item's neighbours in that order.
 *
 * <h2>Rows, and what is computed on read</h2>
 * In a {@link PairTable} every pair has a row, the same in every horizon of the table ({@link #row}). A refresh's
 * table holds the counts only (read from the state at the refresh: {@link Rows}); a pair's measures, the sort, the
 * neighbour lists and the item map are computed on first read and kept ({@link #row}, {@link #pairs},
 * {@link #neighboursOf}), each for what was asked: a reader of three neighbour lists computes the measures of
 * their pairs and sorts those lists, never the horizon. What they compute equals, bit for bit, what a table built
 * eagerly holds ({@code RefreshMemoryTest}). Immutable as seen from outside and safe to share between threads.
 */
public final class HorizonTable {
  /**
   * What a horizon table's rows are read from: the counts a refresh took from the state, or a table built from
   * lists. Implementations are immutable; {@link #stats} computes (the table keeps what it returns).
   */
  public interface Rows {
    /** Rows of the table (every horizon of one table has the same number). */
    int rowCount();

    /** Whether row {@code row}'s pair is published in this horizon. */
    boolean present(int row);

    /** n_ab of a present row (cheap: no measures). */
    Estimate countAB(int row);

    /** n_a of a present row's first item. */
    Estimate countA(int row);

    /** n_b of a present row's second item. */
    Estimate countB(int row);

    /** The statistics of a present row: counts with the size-adjusted expectation, and every measure. */
    PairStats stats(int row);

    /**
     * The association p-value of a present row ({@link org.pairpulse.sketch.stats.PairMeasures#associationPValue()}
     * of {@link #stats}, bit for bit), without computing its other measures.
     */
    default double associationPValue(int row) {
      return stats(row).measures().associationPValue();
    }

    /**
     * The table's order between two present rows whose statistics are {@code x} and {@code y}: negative when
     * {@code rowX} comes first. Strict: 0 only for the same row.
     */
    int compare(int rowX, PairStats x, int rowY, PairStats y);

    /** The first item of a row's pair (the same in every horizon of the table). */
    String itemA(int row);

    /** The second item of a row's pair. */
    String itemB(int row);

    /** Event time at which a row's pair entered the tracked table. */
    long trackedSinceMillis(int row);

    /** The rows whose pair holds {@code item} (in any order; present in this horizon or not); empty if none. */
    int[] rowsOf(String item);

    /** The row of the pair {a, b}, −1 if the table has none (the pair is unordered). */
    int rowOf(String itemA, String itemB);

    /** n_a of every tracked item, as a new map. */
    Map<String, Estimate> itemCounts();

    /** Present rows in an order close to the table's (a hint that makes the sort cheap), or null. */
    int[] orderHint();

    /** Told the order once the horizon is sorted (so that the next table's sort can start from it). */
    default void sorted(int[] order) {}
  }

  private final String name;
  private final double baskets;
  private final long halfLifeMillis;
  private final Rows rows;
  private final AtomicReferenceArray<PairStats> stats;
  private final Map<String, List<PairStats>> neighbourLists = new ConcurrentHashMap<>();
  private volatile List<PairStats> pairs;
  private volatile int[] order;
  private volatile int[] places;
  private volatile Map<String, List<PairStats>> neighbours;
  private volatile Map<String, Estimate> itemCounts;

  /**
   * A horizon table from lists: its rows are assigned when a {@link PairTable} holds it (a join of the table's
   * horizons by item names).
   *
   * @param name the horizon
   * @param baskets N in basket units as of the watermark
   * @param pairs all published pairs, best first
   * @param neighbours for each item, the published pairs that contain it, best first
   * @param itemCounts n_a of every tracked item
   * @param halfLifeMillis the half-life of a decay horizon, 0 for a window (or when unknown)
   */
  public HorizonTable(String name, double baskets, List<PairStats> pairs, Map<String, List<PairStats>> neighbours,
      Map<String, Estimate> itemCounts, long halfLifeMillis) {
    this.name = name;
    this.baskets = baskets;
    this.halfLifeMillis = halfLifeMillis;
    this.rows = null;
    this.stats = new AtomicReferenceArray<>(0);
    this.pairs = Collections.unmodifiableList(pairs);
    this.neighbours = Collections.unmodifiableMap(neighbours);
    this.itemCounts = Collections.unmodifiableMap(itemCounts);
  }

  /** A horizon table without a half-life (a window, or a decay whose half-life is not known). */
  public HorizonTable(String name, double baskets, List<PairStats> pairs, Map<String, List<PairStats>> neighbours,
      Map<String, Estimate> itemCounts) {
    this(name, baskets, pairs, neighbours, itemCounts, 0L);
  }

  private HorizonTable(String name, double baskets, long halfLifeMillis, Rows rows, HorizonTable lists) {
    this.name = name;
    this.baskets = baskets;
    this.halfLifeMillis = halfLifeMillis;
    this.rows = rows;
    this.stats = new AtomicReferenceArray<>(rows.rowCount());
    if (lists != null) {
      this.pairs = lists.pairs;
      this.neighbours = lists.neighbours;
      this.itemCounts = lists.itemCounts;
    }
  }

  /** A horizon table read from {@code rows}: everything but N is computed on read (a refresh's table). */
  public static HorizonTable ofRows(String name, double baskets, long halfLifeMillis, Rows rows) {
    return new HorizonTable(name, baskets, halfLifeMillis, rows, null);
  }

  /** This table's lists with rows assigned (by {@link PairTable}, for a table built from lists). */
  HorizonTable withRows(Rows assigned) {
    return new HorizonTable(name, baskets, halfLifeMillis, assigned, this);
  }

  /** Whether this table has rows (it is held by a {@link PairTable}). */
  boolean hasRows() {
    return rows != null;
  }

  public String name() {
    return name;
  }

  /** N in basket units as of the watermark. */
  public double baskets() {
    return baskets;
  }

  /** The half-life of a decay horizon, 0 for a window (or when unknown). */
  public long halfLifeMillis() {
    return halfLifeMillis;
  }

  /** Rows of the table this horizon belongs to (0 for a table from lists not yet held by a {@link PairTable}). */
  public int rowCount() {
    return rows == null ? 0 : rows.rowCount();
  }

  /** Whether row {@code row}'s pair is published in this horizon. */
  public boolean present(int row) {
    return rows != null && rows.present(row);
  }

  /** The statistics of row {@code row}, computed on first read; null when the pair is absent from this horizon. */
  public PairStats row(int row) {
    if (!present(row)) {
      return null;
    }
    PairStats s = stats.get(row);
    if (s == null) { // one object per row, whoever computes it first: readers may hold it by identity
      PairStats computed = rows.stats(row);
      s = stats.compareAndExchange(row, null, computed);
      if (s == null) {
        s = computed;
      }
    }
    return s;
  }

  /**
   * The association p-value of a present row ({@code row(row).measures().associationPValue()}, bit for bit): read
   * from the row's statistics when a reader computed them, else from its counts and E alone (no other measure is
   * computed, nothing is kept).
   */
  public double associationPValue(int row) {
    PairStats s = stats.get(row);
    return s != null ? s.measures().associationPValue() : rows.associationPValue(row);
  }

  /** n_ab of a present row, without its measures. */
  public Estimate countAB(int row) {
    return rows.countAB(row);
  }

  /** n_a of a present row's first item, without its measures. */
  public Estimate countA(int row) {
    return rows.countA(row);
  }

  /** n_b of a present row's second item, without its measures. */
  public Estimate countB(int row) {
    return rows.countB(row);
  }

  /** The first item of row {@code row}'s pair. */
  public String itemA(int row) {
    return rows.itemA(row);
  }

  /** The second item of row {@code row}'s pair. */
  public String itemB(int row) {
    return rows.itemB(row);
  }

  /** Event time at which row {@code row}'s pair entered the tracked table. */
  public long trackedSinceMillis(int row) {
    return rows.trackedSinceMillis(row);
  }

  /** The row of the pair {a, b} (unordered), −1 when the table has none. */
  public int rowOf(String itemA, String itemB) {
    return rows == null ? -1 : rows.rowOf(itemA, itemB);
  }

  /** The table's order between two present rows: negative when {@code x} comes first (strict). */
  public int compareRows(int x, int y) {
    return rows.compare(x, row(x), y, row(y));
  }

  /** The present rows, best first (sorts the horizon on first call; a copy). */
  public int[] order() {
    return orderShared().clone();
  }

  private int[] orderShared() {
    int[] o = order;
    if (o == null) {
      synchronized (this) {
        o = order;
        if (o == null) {
          o = sortedRows();
          order = o;
          rows.sorted(o);
        }
      }
    }
    return o;
  }

  /**
   * The present rows best first. The order is strict, so the result does not depend on where the sort starts;
   * starting from the hint (the previous table's order) makes it nearly sorted, and the merge sort (adaptive) runs in
   * about one comparison per pair.
   */
  private int[] sortedRows() {
    int count = rows.rowCount();
    Integer[] sorted = new Integer[count];
    boolean[] placed = new boolean[count];
    int n = 0;
    int[] hint = rows.orderHint();
    if (hint != null) {
      for (int r : hint) {
        if (r < count && !placed[r] && present(r)) {
          sorted[n++] = r;
          placed[r] = true;
        }
      }
    }
    for (int r = 0; r < count; r++) {
      if (!placed[r] && present(r)) {
        sorted[n++] = r;
      }
    }
    PairStats[] byRow = new PairStats[count];
    for (int i = 0; i < n; i++) {
      byRow[sorted[i]] = row(sorted[i]);
    }
    Arrays.sort(sorted, 0, n, (x, y) -> rows.compare(x, byRow[x], y, byRow[y]));
    int[] out = new int[n];
    for (int i = 0; i < n; i++) {
      out[i] = sorted[i];
    }
    return out;
  }

  /** All published pairs, best first (computes every pair's measures and sorts, on first call). */
  public List<PairStats> pairs() {
    List<PairStats> p = pairs;
    if (p == null) {
      int[] o = orderShared();
      PairStats[] sorted = new PairStats[o.length];
      for (int i = 0; i < o.length; i++) {
        sorted[i] = row(o[i]);
      }
      p = Collections.unmodifiableList(Arrays.asList(sorted));
      pairs = p;
    }
    return p;
  }

  /** For each item, the published pairs that contain it, best first (every list, on first call). */
  public Map<String, List<PairStats>> neighbours() {
    Map<String, List<PairStats>> all = neighbours;
    if (all == null) {
      Map<String, List<PairStats>> built = new HashMap<>();
      for (PairStats s : pairs()) {
        built.computeIfAbsent(s.itemA(), k -> new ArrayList<>()).add(s);
        built.computeIfAbsent(s.itemB(), k -> new ArrayList<>()).add(s);
      }
      built.replaceAll((item, list) -> Collections.unmodifiableList(list));
      all = Collections.unmodifiableMap(built);
      neighbours = all;
    }
    return all;
  }

  /** n_a of every tracked item. */
  public Map<String, Estimate> itemCounts() {
    Map<String, Estimate> counts = itemCounts;
    if (counts == null) {
      counts = Collections.unmodifiableMap(rows.itemCounts());
      itemCounts = counts;
    }
    return counts;
  }

  /** The neighbours of {@code item}, best first; empty for unknown items. Sorts only this item's pairs. */
  public List<PairStats> neighboursOf(String item) {
    Map<String, List<PairStats>> all = neighbours;
    if (all != null) {
      return all.getOrDefault(item, List.of());
    }
    return neighbourLists.computeIfAbsent(item, this::sortedNeighbours);
  }

  /**
   * The rows of {@code item}'s published pairs, best first: sorted by their own statistics, or, once the horizon is
   * sorted, by their places in its order (the same order: it is strict), without reading a measure.
   */
  public int[] neighbourRows(String item) {
    int[] candidates = rows == null ? new int[0] : rows.rowsOf(item);
    int[] place = order == null ? null : places();
    if (place != null) {
      long[] keyed = new long[candidates.length];
      int n = 0;
      for (int r : candidates) {
        if (present(r)) {
          keyed[n++] = ((long) place[r] << 32) | r;
        }
      }
      Arrays.sort(keyed, 0, n);
      int[] out = new int[n];
      for (int i = 0; i < n; i++) {
        out[i] = (int) keyed[i];
      }
      return out;
    }
    Integer[] present = new Integer[candidates.length];
    int n = 0;
    for (int r : candidates) {
      if (present(r)) {
        present[n++] = r;
      }
    }
    Arrays.sort(present, 0, n, (x, y) -> rows.compare(x, row(x), y, row(y)));
    int[] out = new int[n];
    for (int i = 0; i < n; i++) {
      out[i] = present[i];
    }
    return out;
  }

  /** Each present row's place in the sorted order (once the horizon is sorted). */
  private int[] places() {
    int[] p = places;
    if (p == null) {
      int[] o = orderShared();
      p = new int[rows.rowCount()];
      for (int i = 0; i < o.length; i++) {
        p[o[i]] = i;
      }
      places = p;
    }
    return p;
  }

  private List<PairStats> sortedNeighbours(String item) {
    int[] sorted = neighbourRows(item);
    if (sorted.length == 0) {
      return List.of();
    }
    PairStats[] list = new PairStats[sorted.length];
    for (int i = 0; i < sorted.length; i++) {
      list[i] = row(sorted[i]);
    }
    return Collections.unmodifiableList(Arrays.asList(list));
  }
}
