package org.pairpulse.serve;

import java.util.ArrayList;
import java.util.List;
import org.pairpulse.sketch.engine.EngineStats;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The state's fill and error bounds, for the status endpoint, the dashboard and {@code /metrics}.
 * The wiring captures one on the engine's writer thread at each refresh ({@link #capture}) and
 * hands serve a supplier of the newest.
 *
 * @param trackedPairs pairs in the tracked table
 * @param trackedPairCapacity its capacity
 * @param trackedItems items in the tracked table
 * @param trackedItemCapacity its capacity
 * @param stateBytes heap bytes of sketches and tracked tables
 * @param horizons per published horizon: N and ε·W
 */
public record SketchHealth(int trackedPairs, int trackedPairCapacity, int trackedItems, int trackedItemCapacity,
    long stateBytes, List<HorizonHealth> horizons) {

  /**
   * One horizon's size and error bound.
   *
   * @param name the horizon
   * @param baskets N as of the watermark
   * @param pairErrorBound ε·W of pair counts: the most a sketched pair count may overcount
   * @param itemErrorBound ε·W of item counts
   */
  public record HorizonHealth(String name, double baskets, double pairErrorBound, double itemErrorBound) {}

  public SketchHealth {
    horizons = List.copyOf(horizons);
  }

  /** Nothing known yet. */
  public static SketchHealth unknown() {
    return new SketchHealth(0, 0, 0, 0, 0, List.of());
  }

  /** Captures the engine's health. Call on the engine's writer thread (an engine is single-writer). */
  public static SketchHealth capture(PairEngine engine) {
    EngineStats stats = engine.stats();
    List<HorizonHealth> horizons = new ArrayList<>();
    for (HorizonSpec spec : engine.config().horizons()) {
      String name = spec.name();
      horizons.add(new HorizonHealth(name, engine.basketCount(name), engine.pairErrorBound(name),
          engine.itemErrorBound(name)));
    }
    return new SketchHealth(stats.trackedPairs(), engine.config().trackedPairCapacity(), stats.trackedItems(),
        engine.config().trackedItemCapacity(), engine.stateBytes(), horizons);
  }

  /** trackedPairs / capacity, or NaN when unknown. */
  public double pairFill() {
    return trackedPairCapacity == 0 ? Double.NaN : (double) trackedPairs / trackedPairCapacity;
  }

  /** trackedItems / capacity, or NaN when unknown. */
  public double itemFill() {
    return trackedItemCapacity == 0 ? Double.NaN : (double) trackedItems / trackedItemCapacity;
  }
}
