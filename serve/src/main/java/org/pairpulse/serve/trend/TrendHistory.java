package org.pairpulse.serve.trend;

import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * A bounded in-memory history of measure snapshots, one <em>trend point</em> per new table version:
 * the series behind the trend endpoint and the dashboard's charts.
 *
 * <h2>What a point holds</h2>
 * Not every pair (a table may hold 200,000): per point, the {@code pairsPerPoint} best published
 * pairs of the first horizon (table order), the pairs the caller names as drifting, and the
 * <em>pinned</em> pairs and items: those asked for through {@link #pin(PairKey)} / {@link #pin(String)}
 * (the trend endpoint pins what it is asked about, so a chart keeps filling), at most
 * {@code pinned} of each, least recently asked dropped. Items likewise: the {@code itemsPerPoint}
 * most frequent published items of the first horizon, plus pinned ones. Per pair and horizon a
 * point keeps lift, its interval, shrunk lift, support, both confidences and n_ab; per item and
 * horizon n_a and its share n_a/N. Only statistics that pass the cohort floor are recorded.
 *
 * <h2>Memory</h2>
 * A ring of {@code points} points; the oldest leaves when a new one arrives. Bounded by
 * {@code points × (pairsPerPoint + drifting + pinned)} pair records of 8 floats per horizon, about
 * 10 MB with the defaults (240 points, 150 + up to 60 + 32 pairs, three horizons).
 *
 * <p>Thread-safe: one writer ({@link #record}), any number of readers.
 */
public final class TrendHistory {
  /** Values kept per pair and horizon, in this order. */
  public static final List<String> PAIR_FIELDS =
      List.of("lift", "liftLower", "liftUpper", "shrunkLift", "support", "confidenceAB", "confidenceBA", "pairBaskets");
  /** Values kept per item and horizon, in this order. */
  public static final List<String> ITEM_FIELDS = List.of("count", "share");

  /** One trend point. */
  private record Point(long version, long watermarkMillis, long publishedAtMillis, Map<PairKey, float[]> pairs,
      Map<String, float[]> items) {}

  /**
   * A series: parallel lists, one entry per point in which the pair (or item) was recorded.
   *
   * @param horizons the horizons, in table order
   * @param versions table versions
   * @param watermarkMillis event times the points are as of
   * @param publishedAtMillis refresh times
   * @param values per horizon, per field ({@link #PAIR_FIELDS} or {@link #ITEM_FIELDS}): the values (NaN where not published)
   */
  public record Series(List<String> horizons, List<Long> versions, List<Long> watermarkMillis,
      List<Long> publishedAtMillis, Map<String, Map<String, List<Double>>> values) {}

  private final int capacity;
  private final int pairsPerPoint;
  private final int itemsPerPoint;
  private final int pinnedCapacity;
  private final ArrayDeque<Point> points = new ArrayDeque<>();
  private final LinkedHashMap<PairKey, Boolean> pinnedPairs;
  private final LinkedHashMap<String, Boolean> pinnedItems;
  private List<String> horizons = List.of();

  public TrendHistory(int capacity, int pairsPerPoint, int itemsPerPoint, int pinned) {
    if (capacity < 2 || pairsPerPoint < 0 || itemsPerPoint < 0 || pinned < 0) {
      throw new IllegalArgumentException("need capacity >= 2 and non-negative limits");
    }
    this.capacity = capacity;
    this.pairsPerPoint = pairsPerPoint;
    this.itemsPerPoint = itemsPerPoint;
    this.pinnedCapacity = pinned;
    this.pinnedPairs = new LinkedHashMap<>(16, 0.75f, true);
    this.pinnedItems = new LinkedHashMap<>(16, 0.75f, true);
  }

  /** Keeps recording {@code pair} from the next point on (least recently pinned dropped beyond the limit). */
  public synchronized void pin(PairKey pair) {
    if (pinnedCapacity == 0) {
      return;
    }
    pinnedPairs.put(pair, Boolean.TRUE);
    while (pinnedPairs.size() > pinnedCapacity) {
      pinnedPairs.remove(pinnedPairs.keySet().iterator().next());
    }
  }

  /** Keeps recording {@code item} from the next point on. */
  public synchronized void pin(String item) {
    if (pinnedCapacity == 0) {
      return;
    }
    pinnedItems.put(item, Boolean.TRUE);
    while (pinnedItems.size() > pinnedCapacity) {
      pinnedItems.remove(pinnedItems.keySet().iterator().next());
    }
  }

  /** Adds a point for {@code table}; {@code drifting} pairs are recorded too. */
  public void record(FlooredTable table, Collection<PairKey> drifting) {
    List<String> names = table.horizonNames();
    if (names.isEmpty()) {
      return;
    }
    Set<PairKey> pairKeys = new LinkedHashSet<>();
    List<PairStats> best = table.pairs(names.get(0));
    for (int i = 0; i < Math.min(pairsPerPoint, best.size()); i++) {
      pairKeys.add(PairKey.of(best.get(i).itemA(), best.get(i).itemB()));
    }
    pairKeys.addAll(drifting);
    Set<String> itemKeys = new LinkedHashSet<>();
    table.items(names.get(0)).entrySet().stream()
        .sorted(Comparator.comparingDouble((Map.Entry<String, Estimate> e) -> -e.getValue().value())
            .thenComparing(Map.Entry::getKey))
        .limit(itemsPerPoint).forEach(e -> itemKeys.add(e.getKey()));
    synchronized (this) {
      pairKeys.addAll(pinnedPairs.keySet());
      itemKeys.addAll(pinnedItems.keySet());
    }
    Map<PairKey, float[]> pairs = new HashMap<>();
    for (PairKey key : pairKeys) {
      float[] values = new float[names.size() * PAIR_FIELDS.size()];
      boolean any = false;
      for (int h = 0; h < names.size(); h++) {
        Optional<PairStats> stats = table.pair(key.first(), key.second(), names.get(h));
        int base = h * PAIR_FIELDS.size();
        if (stats.isEmpty()) {
          java.util.Arrays.fill(values, base, base + PAIR_FIELDS.size(), Float.NaN);
          continue;
        }
        any = true;
        PairStats p = stats.get();
        PairMeasures m = p.measures();
        boolean forward = p.itemA().equals(key.first());
        values[base] = (float) m.lift();
        values[base + 1] = (float) m.liftLower();
        values[base + 2] = (float) m.liftUpper();
        values[base + 3] = (float) m.shrunkLift();
        values[base + 4] = (float) m.support();
        values[base + 5] = (float) (forward ? m.confidenceAB() : m.confidenceBA());
        values[base + 6] = (float) (forward ? m.confidenceBA() : m.confidenceAB());
        values[base + 7] = (float) p.counts().countAB().value();
      }
      if (any) {
        pairs.put(key, values);
      }
    }
    Map<String, float[]> items = new HashMap<>();
    for (String item : itemKeys) {
      float[] values = new float[names.size() * ITEM_FIELDS.size()];
      boolean any = false;
      for (int h = 0; h < names.size(); h++) {
        Optional<Estimate> count = table.itemCount(item, names.get(h));
        double baskets = table.baskets(names.get(h));
        values[h * 2] = count.isPresent() ? (float) count.get().value() : Float.NaN;
        values[h * 2 + 1] = count.isPresent() ? (float) (count.get().value() / baskets) : Float.NaN;
        any |= count.isPresent();
      }
      if (any) {
        items.put(item, values);
      }
    }
    Point point = new Point(table.version(), table.table().watermarkMillis(), table.table().publishedAtMillis(), pairs,
        items);
    synchronized (this) {
      if (!names.equals(horizons)) {
        points.clear(); // the horizons changed: old points do not line up
        horizons = List.copyOf(names);
      }
      if (points.size() == capacity) {
        points.removeFirst();
      }
      points.addLast(point);
    }
  }

  /** The series of one pair (either order), oldest first. */
  public synchronized Series pairSeries(PairKey pair) {
    return series(PAIR_FIELDS, p -> p.pairs().get(pair));
  }

  /** The series of one item, oldest first. */
  public synchronized Series itemSeries(String item) {
    return series(ITEM_FIELDS, p -> p.items().get(item));
  }

  private Series series(List<String> fields, java.util.function.Function<Point, float[]> values) {
    List<Long> versions = new ArrayList<>();
    List<Long> watermarks = new ArrayList<>();
    List<Long> published = new ArrayList<>();
    Map<String, Map<String, List<Double>>> out = new LinkedHashMap<>();
    for (String h : horizons) {
      Map<String, List<Double>> byField = new LinkedHashMap<>();
      for (String f : fields) {
        byField.put(f, new ArrayList<>());
      }
      out.put(h, byField);
    }
    for (Point point : points) {
      float[] v = values.apply(point);
      if (v == null) {
        continue;
      }
      versions.add(point.version());
      watermarks.add(point.watermarkMillis());
      published.add(point.publishedAtMillis());
      for (int h = 0; h < horizons.size(); h++) {
        for (int f = 0; f < fields.size(); f++) {
          out.get(horizons.get(h)).get(fields.get(f)).add((double) v[h * fields.size() + f]);
        }
      }
    }
    return new Series(horizons, versions, watermarks, published, out);
  }

  /** Points held now. */
  public synchronized int size() {
    return points.size();
  }
}
