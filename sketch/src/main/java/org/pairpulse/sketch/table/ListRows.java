package org.pairpulse.sketch.table;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.pairpulse.sketch.stats.Estimate;

/**
 * Rows for a table built from lists (tests, hand-made tables): the horizons are joined by item names, one row per
 * unordered pair, numbered in the order first met; a horizon's order is its list's.
 */
final class ListRows implements HorizonTable.Rows {
  private final Join join;
  private final PairStats[] byRow;
  private final int[] rank;
  private final int[] listOrder;
  private final Map<String, Estimate> itemCounts;

  /** The unordered pair {first ≤ second}. */
  private record Key(String first, String second) {
    static Key of(String a, String b) {
      return a.compareTo(b) <= 0 ? new Key(a, b) : new Key(b, a);
    }
  }

  /** What the horizons share: the rows by pair, each row's items and the rows of each item. */
  private static final class Join {
    final Map<Key, Integer> rowOfPair = new HashMap<>();
    final List<String> itemA = new ArrayList<>();
    final List<String> itemB = new ArrayList<>();
    final List<Long> since = new ArrayList<>();
    final Map<String, List<Integer>> rowsOfItem = new HashMap<>();
    final Map<String, int[]> rowsOfItemArrays = new HashMap<>();

    int row(PairStats stats) {
      Key key = Key.of(stats.itemA(), stats.itemB());
      Integer row = rowOfPair.get(key);
      if (row == null) {
        row = rowOfPair.size();
        rowOfPair.put(key, row);
        itemA.add(stats.itemA());
        itemB.add(stats.itemB());
        since.add(stats.trackedSinceMillis());
        rowsOfItem.computeIfAbsent(stats.itemA(), k -> new ArrayList<>()).add(row);
        rowsOfItem.computeIfAbsent(stats.itemB(), k -> new ArrayList<>()).add(row);
      }
      return row;
    }

    void freeze() {
      rowsOfItem.forEach((item, rows) -> rowsOfItemArrays.put(item, rows.stream().mapToInt(Integer::intValue).toArray()));
    }
  }

  private ListRows(Join join, PairStats[] byRow, int[] rank, int[] listOrder, Map<String, Estimate> itemCounts) {
    this.join = join;
    this.byRow = byRow;
    this.rank = rank;
    this.listOrder = listOrder;
    this.itemCounts = itemCounts;
  }

  /** The horizons with rows assigned by a join on item names. */
  static Map<String, HorizonTable> join(Map<String, HorizonTable> horizons) {
    Join join = new Join();
    Map<String, int[]> rowsInOrder = new LinkedHashMap<>();
    for (Map.Entry<String, HorizonTable> horizon : horizons.entrySet()) {
      List<PairStats> pairs = horizon.getValue().pairs();
      int[] rows = new int[pairs.size()];
      for (int i = 0; i < rows.length; i++) {
        rows[i] = join.row(pairs.get(i));
      }
      rowsInOrder.put(horizon.getKey(), rows);
    }
    join.freeze();
    int rowCount = join.rowOfPair.size();
    Map<String, HorizonTable> joined = new LinkedHashMap<>();
    for (Map.Entry<String, HorizonTable> horizon : horizons.entrySet()) {
      List<PairStats> pairs = horizon.getValue().pairs();
      int[] rows = rowsInOrder.get(horizon.getKey());
      PairStats[] byRow = new PairStats[rowCount];
      int[] rank = new int[rowCount];
      for (int i = 0; i < rows.length; i++) {
        byRow[rows[i]] = pairs.get(i);
        rank[rows[i]] = i;
      }
      joined.put(horizon.getKey(), horizon.getValue().withRows(
          new ListRows(join, byRow, rank, rows, horizon.getValue().itemCounts())));
    }
    return joined;
  }

  @Override
  public int rowCount() {
    return byRow.length;
  }

  @Override
  public boolean present(int row) {
    return byRow[row] != null;
  }

  @Override
  public Estimate countAB(int row) {
    return byRow[row].counts().countAB();
  }

  @Override
  public Estimate countA(int row) {
    return byRow[row].counts().countA();
  }

  @Override
  public Estimate countB(int row) {
    return byRow[row].counts().countB();
  }

  @Override
  public PairStats stats(int row) {
    return byRow[row];
  }

  @Override
  public int compare(int rowX, PairStats x, int rowY, PairStats y) {
    return Integer.compare(rank[rowX], rank[rowY]);
  }

  @Override
  public String itemA(int row) {
    return byRow[row] != null ? byRow[row].itemA() : join.itemA.get(row);
  }

  @Override
  public String itemB(int row) {
    return byRow[row] != null ? byRow[row].itemB() : join.itemB.get(row);
  }

  @Override
  public long trackedSinceMillis(int row) {
    return byRow[row] != null ? byRow[row].trackedSinceMillis() : join.since.get(row);
  }

  @Override
  public int[] rowsOf(String item) {
    return join.rowsOfItemArrays.getOrDefault(item, new int[0]);
  }

  @Override
  public int rowOf(String itemA, String itemB) {
    Integer row = join.rowOfPair.get(Key.of(itemA, itemB));
    return row == null ? -1 : row;
  }

  @Override
  public Map<String, Estimate> itemCounts() {
    return new HashMap<>(itemCounts);
  }

  @Override
  public int[] orderHint() {
    return listOrder;
  }
}
