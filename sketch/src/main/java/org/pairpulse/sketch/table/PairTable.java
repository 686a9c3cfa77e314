package org.pairpulse.sketch.table;

import java.util.List;
import java.util.Map;
import java.util.Optional;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;

/**
 * The immutable result of a refresh: statistics of every tracked pair per horizon, plus each item's
 * neighbours sorted by the table's measure. Safe to share between threads; never changes. A refresh's table holds
 * counts and computes measures, sorts and neighbour lists on read ({@link HorizonTable}).
 */
public final class PairTable {
  private static final PairTable EMPTY = new PairTable(0, 0, Long.MIN_VALUE, Measure.SHRUNK_LIFT, Map.of(), List.of());

  /** Name of the engine's tracking decay in a refreshed table (not in {@link #horizonNames()}). */
  public static final String TRACKING_HORIZON = "tracking";

  private final long version;
  private final long publishedAtMillis;
  private final long watermarkMillis;
  private final Measure sortMeasure;
  private final Map<String, HorizonTable> horizons;
  private final List<String> horizonNames;

  /**
   * A table from lists: the horizons' pairs get rows by a join on item names (one row per unordered pair), so that
   * every reader reads every table by row.
   *
   * @param version increasing publication number (0 only for the empty table)
   * @param publishedAtMillis wall-clock time of the refresh
   * @param watermarkMillis event time the counts are as of
   * @param sortMeasure the measure that orders pairs and neighbours
   * @param horizons the horizon tables by name
   * @param horizonNames horizon names in configuration order
   */
  public PairTable(long version, long publishedAtMillis, long watermarkMillis, Measure sortMeasure,
      Map<String, HorizonTable> horizons, List<String> horizonNames) {
    this(version, publishedAtMillis, watermarkMillis, sortMeasure, ListRows.join(horizons), horizonNames, true);
  }

  private PairTable(long version, long publishedAtMillis, long watermarkMillis, Measure sortMeasure,
      Map<String, HorizonTable> horizons, List<String> horizonNames, boolean withRows) {
    this.version = version;
    this.publishedAtMillis = publishedAtMillis;
    this.watermarkMillis = watermarkMillis;
    this.sortMeasure = sortMeasure;
    this.horizons = Map.copyOf(horizons);
    this.horizonNames = List.copyOf(horizonNames);
    for (HorizonTable horizon : this.horizons.values()) {
      if (!horizon.hasRows()) {
        throw new IllegalArgumentException("horizon '" + horizon.name() + "' has no rows");
      }
    }
  }

  /**
   * A refresh's table: horizons read by row ({@link HorizonTable#ofRows}), every horizon with the same rows (the
   * tracked slots), so that a reader joins a pair's horizons by row.
   */
  public static PairTable ofRows(long version, long publishedAtMillis, long watermarkMillis, Measure sortMeasure,
      Map<String, HorizonTable> horizons, List<String> horizonNames) {
    return new PairTable(version, publishedAtMillis, watermarkMillis, sortMeasure, horizons, horizonNames, true);
  }

  /**
   * The rows of a horizon's pairs: {@code rows().get(r)} is the pair of row r in the horizon (null when absent
   * there; the same r is the same pair in every horizon), and {@code order()[i]} is the row of
   * {@code pairs(horizon).get(i)}. Reading the list computes the statistics it returns; the order sorts the
   * horizon. Empty for an unknown horizon.
   */
  public Optional<PairRows> pairRows(String horizon) {
    HorizonTable table = horizons.get(horizon);
    if (table == null) {
      return Optional.empty();
    }
    List<PairStats> rows = new java.util.AbstractList<>() {
      @Override
      public PairStats get(int index) {
        java.util.Objects.checkIndex(index, table.rowCount());
        return table.row(index);
      }

      @Override
      public int size() {
        return table.rowCount();
      }
    };
    return Optional.of(new PairRows(rows, table.order()));
  }

  /**
   * One horizon's pairs by row and the rows in the horizon's order; see {@link PairTable#pairRows}.
   *
   * @param rows the horizon's pair of each row, null where absent
   * @param order the rows of the horizon's pairs, best first
   */
  public record PairRows(List<PairStats> rows, int[] order) {}

  /** The table before any refresh: no horizons, no pairs, version 0. */
  public static PairTable empty() {
    return EMPTY;
  }

  public long version() {
    return version;
  }

  public long publishedAtMillis() {
    return publishedAtMillis;
  }

  public long watermarkMillis() {
    return watermarkMillis;
  }

  public Measure sortMeasure() {
    return sortMeasure;
  }

  /**
   * Horizon names in configuration order. A refresh also holds the engine's tracking decay under
   * {@value #TRACKING_HORIZON} ({@link #horizon}, {@link #pairs}, {@link #pair} answer it), which is not
   * listed here: it is drift's reference period, not a horizon to rank or suggest from.
   */
  public List<String> horizonNames() {
    return horizonNames;
  }

  /** The horizon's table, if the horizon exists. */
  public Optional<HorizonTable> horizon(String name) {
    return Optional.ofNullable(horizons.get(name));
  }

  /** All published pairs of a horizon, best first (empty for an unknown horizon). */
  public List<PairStats> pairs(String horizon) {
    HorizonTable table = horizons.get(horizon);
    return table == null ? List.of() : table.pairs();
  }

  /** Neighbours of an item in a horizon, best first (empty when unknown). */
  public List<PairStats> neighbours(String item, String horizon) {
    HorizonTable table = horizons.get(horizon);
    return table == null ? List.of() : table.neighboursOf(item);
  }

  /** The pair {a, b} in a horizon, if tracked. */
  public Optional<PairStats> pair(String itemA, String itemB, String horizon) {
    HorizonTable table = horizons.get(horizon);
    if (table == null || itemA.equals(itemB)) {
      return Optional.empty();
    }
    int row = table.rowOf(itemA, itemB);
    return row < 0 ? Optional.empty() : Optional.ofNullable(table.row(row));
  }

  /** n_a of a tracked item in a horizon. */
  public Optional<Estimate> itemCount(String item, String horizon) {
    HorizonTable table = horizons.get(horizon);
    return table == null ? Optional.empty() : Optional.ofNullable(table.itemCounts().get(item));
  }

  /** Tracked pairs published (the same in every horizon). */
  public int pairCount() {
    if (horizonNames.isEmpty()) {
      return 0;
    }
    HorizonTable first = horizons.get(horizonNames.get(0));
    int count = 0;
    for (int r = 0; r < first.rowCount(); r++) {
      count += first.present(r) ? 1 : 0;
    }
    return count;
  }
}
