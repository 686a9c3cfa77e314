package org.pairpulse.ops.tools.scenario;

import java.util.Arrays;
import java.util.HashMap;
import java.util.Iterator;
import java.util.Map;

/**
 * The tests' oracle: every basket of a run kept compactly (times, item ids), counted exactly by plain scans.
 * Times must be in order (no jitter) so that a time range is a slice.
 */
final class BasketTally {
  final String[] names;
  final long[] times;
  /** Basket {@code b} holds {@code items[starts[b] .. starts[b + 1])}. */
  final int[] starts;
  final int[] items;
  final int baskets;
  private final Map<String, Integer> ids = new HashMap<>();

  BasketTally(Iterator<ScenarioBasket> run, Iterable<String> catalog) {
    for (String name : catalog) {
      ids.put(name, ids.size());
    }
    names = new String[ids.size()];
    ids.forEach((name, id) -> names[id] = name);
    long[] times = new long[1 << 16];
    int[] starts = new int[(1 << 16) + 1];
    int[] items = new int[1 << 18];
    int b = 0;
    int i = 0;
    while (run.hasNext()) {
      ScenarioBasket basket = run.next();
      if (b + 1 >= times.length) {
        times = Arrays.copyOf(times, times.length * 2);
        starts = Arrays.copyOf(starts, starts.length * 2);
      }
      if (i + basket.items().size() > items.length) {
        items = Arrays.copyOf(items, items.length * 2);
      }
      times[b] = basket.eventMillis();
      starts[b] = i;
      for (String item : basket.items()) {
        items[i++] = id(item);
      }
      b++;
      starts[b] = i;
    }
    this.baskets = b;
    this.times = Arrays.copyOf(times, b);
    this.starts = Arrays.copyOf(starts, b + 1);
    this.items = Arrays.copyOf(items, i);
  }

  int id(String item) {
    Integer id = ids.get(item);
    if (id == null) {
      throw new IllegalArgumentException("not a catalog item: " + item);
    }
    return id;
  }

  /** The first basket at or after {@code millis}. */
  int firstAt(long millis) {
    int low = 0;
    int high = baskets;
    while (low < high) {
      int middle = (low + high) >>> 1;
      if (times[middle] < millis) {
        low = middle + 1;
      } else {
        high = middle;
      }
    }
    return low;
  }

  /** N: baskets in {@code [from, to)}. */
  int baskets(long from, long to) {
    return firstAt(to) - firstAt(from);
  }

  /** Baskets in {@code [from, to)} holding all of {@code wanted}. */
  int count(long from, long to, String... wanted) {
    int[] wantedIds = Arrays.stream(wanted).mapToInt(this::id).toArray();
    int count = 0;
    for (int b = firstAt(from), end = firstAt(to); b < end; b++) {
      if (holdsAll(b, wantedIds)) {
        count++;
      }
    }
    return count;
  }

  /** N · n_ab / (n_a · n_b) over {@code [from, to)}. */
  double lift(String a, String b, long from, long to) {
    return (double) baskets(from, to) * count(from, to, a, b) / ((double) count(from, to, a) * count(from, to, b));
  }

  /** n_ab / n_a over {@code [from, to)}. */
  double confidence(String a, String b, long from, long to) {
    return (double) count(from, to, a, b) / count(from, to, a);
  }

  /** n_x for every item x over {@code [from, to)}, indexed by id. */
  int[] itemCounts(long from, long to) {
    int[] counts = new int[names.length];
    for (int i = starts[firstAt(from)], end = starts[firstAt(to)]; i < end; i++) {
      counts[items[i]]++;
    }
    return counts;
  }

  /** n_{item,x} for every item x over {@code [from, to)}, indexed by id. */
  int[] partnerCounts(String item, long from, long to) {
    int id = id(item);
    int[] counts = new int[names.length];
    for (int b = firstAt(from), end = firstAt(to); b < end; b++) {
      if (holdsAll(b, new int[] {id})) {
        for (int i = starts[b]; i < starts[b + 1]; i++) {
          if (items[i] != id) {
            counts[items[i]]++;
          }
        }
      }
    }
    return counts;
  }

  private boolean holdsAll(int basket, int[] wanted) {
    for (int w : wanted) {
      boolean found = false;
      for (int i = starts[basket]; i < starts[basket + 1] && !found; i++) {
        found = items[i] == w;
      }
      if (!found) {
        return false;
      }
    }
    return true;
  }
}
