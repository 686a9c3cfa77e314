package org.pairpulse.serve.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;

/** ε·W and fill as captured from an engine, against the count-min definition ε = e / width. */
class SketchHealthTest {

  @Test
  void errorBoundIsEpsilonTimesTheHorizonsWeight() {
    EngineConfig config = EngineConfig.defaults();
    PairEngine engine = new PairEngine(config);
    long t0 = 1_772_409_600_000L;
    for (int i = 0; i < 100; i++) { // 100 baskets of 3 items in one hour: W = 300 pair and 300 item occurrences
      engine.addBasket(t0 + i * 1000L, "a" + (i % 7), "b" + (i % 5), "c" + (i % 3));
    }
    SketchHealth health = SketchHealth.capture(engine);
    assertEquals(List.of("recent", "day", "baseline"), health.horizons().stream().map(SketchHealth.HorizonHealth::name).toList());
    SketchHealth.HorizonHealth day = health.horizons().get(1);
    double pairEpsilon = Math.E / CountMinSketch.widthFor(config.pairEpsilon());
    double itemEpsilon = Math.E / CountMinSketch.widthFor(config.itemEpsilon());
    assertEquals(pairEpsilon * 300, day.pairErrorBound(), 1e-9);
    assertEquals(itemEpsilon * 300, day.itemErrorBound(), 1e-9);
    assertEquals(100, day.baskets(), 1e-9);
    assertEquals(engine.stats().trackedPairs(), health.trackedPairs());
    assertEquals((double) engine.stats().trackedPairs() / config.trackedPairCapacity(), health.pairFill(), 1e-12);
    assertEquals(engine.stateBytes(), health.stateBytes());
  }
}
