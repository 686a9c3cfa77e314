package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.apache.datasketches.frequencies.ErrorType;
import org.apache.datasketches.frequencies.LongsSketch;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.hash.ItemHash;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The tracked-pair table side by side with Apache DataSketches' frequent-items sketch (7.0.1,
 * {@code LongsSketch}, a Misra–Gries variant) on the same pair stream: each must hold every pair above
 * its own stated threshold — ours W / capacity (Metwally, Agrawal, El Abbadi 2005), theirs the
 * sketch's {@code getMaximumError()} with {@link ErrorType#NO_FALSE_NEGATIVES}.
 */
class TrackedPairsVsDataSketchesTest {
  @Test
  void bothHoldEveryPairAboveTheirThresholds() {
    int capacity = 512;
    // a decay with a half-life far beyond the stream: weights stay 1 within 1e-6, like DataSketches' counts
    EngineConfig config = EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("flat", Duration.ofDays(1_000_000))))
        .trackingHorizon("flat").trackedPairCapacity(capacity).pairError(0.002, 0.02)
        .pairRanking(PairRanking.COUNT).build(); // DataSketches ranks by count: compare like with like
    PairEngine engine = new PairEngine(config);
    LongsSketch reference = new LongsSketch(1024); // map size 1024: 0.75·1024 = 768 counters ≥ our 512
    Map<Long, Long> exact = new HashMap<>();
    Map<Long, String> names = new HashMap<>();
    BasketStream stream = BasketStream.pairedHalves(31, 3_000, 1.05, 6, 40);
    long t0 = 1_700_000_000_000L;
    for (int i = 0; i < 40_000; i++) {
      String[] basket = stream.nextBasket();
      engine.addBasket(t0 + i, basket);
      Set<String> distinct = new HashSet<>(List.of(basket));
      String[] items = distinct.toArray(new String[0]);
      for (int x = 0; x < items.length; x++) {
        for (int y = x + 1; y < items.length; y++) {
          long key = ItemHash.pairKey(ItemHash.of(items[x]), ItemHash.of(items[y]));
          reference.update(key);
          exact.merge(key, 1L, Long::sum);
          names.put(key, items[x] + "|" + items[y]);
        }
      }
    }
    long total = exact.values().stream().mapToLong(Long::longValue).sum();
    double oursThreshold = (double) total / capacity;
    long theirsThreshold = reference.getMaximumError();
    Set<Long> theirs = new HashSet<>();
    for (LongsSketch.Row row : reference.getFrequentItems(ErrorType.NO_FALSE_NEGATIVES)) {
      theirs.add(row.getItem());
    }
    int oursHeavy = 0;
    int theirsHeavy = 0;
    for (Map.Entry<Long, Long> e : exact.entrySet()) {
      String[] ab = ExactOracle.split(names.get(e.getKey()));
      if (e.getValue() > oursThreshold * (1 + 1e-5)) {
        oursHeavy++;
        assertTrue(engine.isTracked(ab[0], ab[1]), "ours lost " + names.get(e.getKey()) + " (" + e.getValue() + ")");
      }
      if (e.getValue() > theirsThreshold) {
        theirsHeavy++;
        assertTrue(theirs.contains(e.getKey()), "DataSketches lost " + names.get(e.getKey()));
      }
    }
    assertTrue(oursHeavy > 10 && theirsHeavy > 10, "both thresholds select heavy pairs: " + oursHeavy + ", " + theirsHeavy);
  }
}
