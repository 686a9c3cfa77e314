package org.pairpulse.sketch.bench;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.Test;

/** The throughput benchmark's stream is what its comment promises, and a seed gives one stream. */
class EngineStreamTest {
  @Test
  void basketsHaveOneToEightDistinctItemsAndTimesMoveForward() {
    EngineStream stream = EngineStream.generate(5, 10_000, 50_000, 86_400_000L);
    long previous = Long.MIN_VALUE;
    Map<String, Integer> counts = new HashMap<>();
    for (int b = 0; b < stream.size(); b++) {
      String[] basket = stream.baskets[b];
      assertTrue(basket.length >= 1 && basket.length <= EngineStream.MAX_ITEMS);
      assertEquals(basket.length, Set.of(basket).size(), "distinct items");
      assertEquals(basket.length * (basket.length - 1) / 2, stream.pairsOfBasket[b]);
      assertTrue(stream.eventMillis[b] >= previous);
      previous = stream.eventMillis[b];
      for (String item : basket) {
        counts.merge(item, 1, Integer::sum);
      }
    }
    // 1 + Binomial(7, 3/7): mean 4, variance 7 * 3/7 * 4/7 = 12/7; 5 standard errors over 50,000 baskets
    assertEquals(4.0, stream.meanItems(), 5 * Math.sqrt(12.0 / 7 / 50_000));
    assertTrue(previous >= EngineStream.START_MILLIS && previous < EngineStream.START_MILLIS + 86_400_000L);
    // Zipf: the popular ranks come first (rank 0 about twice rank 1 per draw, ten times rank 9)
    assertTrue(counts.get("i0") > counts.get("i1") && counts.get("i1") > counts.get("i9")
        && counts.get("i9") > counts.getOrDefault("i999", 0), counts.get("i0") + " " + counts.get("i1"));
  }

  @Test
  void aSeedGivesOneStream() {
    EngineStream first = EngineStream.generate(9, 1000, 2000, 3_600_000L);
    EngineStream second = EngineStream.generate(9, 1000, 2000, 3_600_000L);
    for (int b = 0; b < first.size(); b++) {
      assertArrayEquals(first.baskets[b], second.baskets[b]);
    }
    assertArrayEquals(first.eventMillis, second.eventMillis);
  }
}
