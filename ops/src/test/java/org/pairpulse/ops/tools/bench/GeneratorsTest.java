package org.pairpulse.ops.tools.bench;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashSet;
import java.util.Set;
import org.junit.jupiter.api.Test;

/** The benchmarks' seeded workloads produce what their comments promise (the shared sampler and stream: sketch's fixtures tests). */
class GeneratorsTest {
  @Test
  void throughputBasketsHaveOneToEightDistinctItemsAndTimesMoveForward() {
    ThroughputStream stream = ThroughputStream.generate(5, 10_000, 50_000, 86_400_000L);
    long previous = Long.MIN_VALUE;
    for (int b = 0; b < stream.size(); b++) {
      String[] basket = stream.baskets[b];
      assertTrue(basket.length >= 1 && basket.length <= 8);
      assertEquals(basket.length, Set.of(basket).size(), "distinct items");
      assertEquals(basket.length * (basket.length - 1) / 2, stream.pairsOfBasket[b]);
      assertTrue(stream.eventMillis[b] >= previous);
      previous = stream.eventMillis[b];
    }
    assertEquals(4.0, stream.meanItems(), 0.05);
    assertTrue(previous < ThroughputStream.START_MILLIS + 86_400_000L);
  }

  @Test
  void accuracyStreamIsSeededAndPlantsItsPairs() {
    AccuracyStream.Workload workload = new AccuracyStream.Workload(3, 1000, 100_000, 28, 1.2, 50, 0.2);
    AccuracyStream first = new AccuracyStream(workload);
    AccuracyStream second = new AccuracyStream(workload);
    int[] a = new int[6];
    int[] b = new int[6];
    long pairs = 0;
    long previous = Long.MIN_VALUE;
    Set<AccuracyStream.Kind> kinds = new HashSet<>();
    while (first.hasNext()) {
      int n = first.next(a);
      assertEquals(n, second.next(b));
      assertArrayEquals(java.util.Arrays.copyOf(a, n), java.util.Arrays.copyOf(b, n), "same seed, same stream");
      assertTrue(n >= 2 && n <= 6);
      Set<Integer> distinct = new HashSet<>();
      for (int i = 0; i < n; i++) {
        distinct.add(a[i]);
      }
      assertEquals(n, distinct.size(), "distinct items");
      assertTrue(first.eventMillis() >= previous && first.eventMillis() < AccuracyStream.START_MILLIS + workload.spanMillis());
      previous = first.eventMillis();
      kinds.add(first.kindOf(a[0], a[1]));
      pairs += (long) n * (n - 1) / 2;
    }
    assertEquals(100_000, pairs, 3_000, "about the requested pair occurrences");
    assertEquals(Set.of(AccuracyStream.Kind.values()), kinds, "every kind of pair occurs");
  }
}
