package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The tracked table's lazy 4-ary heap against a slow, obvious oracle: a map of every tracked key's count,
 * whose minimum is found by scanning. Ranks grow in place (as the engine adds to them) without telling
 * the heap; the minimum asked for must still be the true one, and the evicted slot the true minimum's.
 */
class TrackedTableTest {

  @Test
  void lazyHeapGivesTheTrueMinimumUnderGrowthEvictionRescaleAndRebuild() {
    int capacity = 257; // not a power of four: the last heap node has fewer than four children
    TrackedTable table = new TrackedTable(capacity, 3, 1, 1, 2, 3);
    Map<Long, Double> oracle = new HashMap<>();
    SplittableRandom random = new SplittableRandom(42);
    for (int step = 0; step < 200_000; step++) {
      long key = random.nextLong(2_000);
      int slot = table.find(key);
      if (slot >= 0) { // grow the count behind the heap's back, as the engine does
        double add = 1 + random.nextInt(5);
        table.rank[slot] += add;
        oracle.merge(key, add, Double::sum);
      } else {
        double min = table.minRank();
        assertEquals(oracle.isEmpty() ? 0.0 : oracle.values().stream().mapToDouble(Double::doubleValue).min().orElseThrow(),
            min, "minimum at step " + step);
        int before = table.size();
        slot = table.admit(key, "k" + key, null, key, 0L, step);
        if (before == capacity) {
          assertEquals(min, oracle.remove(findKeyNotIn(table, oracle)), "the evicted key held the minimum");
        }
        double start = min + 1 + random.nextInt(3);
        table.rank[slot] = start;
        table.placed(slot);
        oracle.put(key, start);
      }
      if (step % 50_000 == 49_999) {
        table.scaleDecay(1, 0, 0.25);
        oracle.replaceAll((k, v) -> v * 0.25);
      }
      if (step == 150_000) {
        table.rebuild(table.size());
      }
      if (step % 997 == 0) {
        assertTrue(table.heapValid(), "heap order, lazy keys and index at step " + step);
      }
    }
    assertEquals(capacity, oracle.size());
    for (Map.Entry<Long, Double> e : oracle.entrySet()) {
      int slot = table.find(e.getKey());
      assertTrue(slot >= 0, "tracked " + e.getKey());
      assertEquals(e.getValue(), table.rank(slot), 1e-9);
    }
  }

  /** The oracle's key that the table no longer holds (the one just evicted). */
  private static long findKeyNotIn(TrackedTable table, Map<Long, Double> oracle) {
    for (long key : oracle.keySet()) {
      if (table.find(key) < 0) {
        return key;
      }
    }
    throw new AssertionError("no key was evicted");
  }
}
