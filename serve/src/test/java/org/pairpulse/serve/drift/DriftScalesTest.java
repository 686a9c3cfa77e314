package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.pairpulse.serve.fixtures.InventedStream.DAY_MILLIS;
import static org.pairpulse.serve.fixtures.InventedStream.T0;

import java.time.Duration;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.InventedStream;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.fixtures.BasketStream.Plant;
import org.pairpulse.sketch.fixtures.BasketStream.Spike;
import org.pairpulse.sketch.table.PairTable;

/**
 * The monitor's short scales on a real engine: a pair that stops selling is alerted as fading by the monitor with the
 * default short scales, from a short scale's counts, and no later than by a monitor that reads the 6-hour recent decay
 * alone; the two monitors see the same tables, and neither raises anything else.
 */
class DriftScalesTest {
  private static final long MINUTE = Duration.ofMinutes(1).toMillis();

  @Test
  void aStoppedPairIsAlertedFromAShortScaleNoLaterThanFromTheRecentDecayAlone() {
    long stop = T0 + 4 * DAY_MILLIS;
    long end = stop + DAY_MILLIS;
    InventedStream stream = new InventedStream(23, 300, EngineConfig.builder().trackedPairCapacity(4096).build())
        .spike(new Spike("roam-zoneb", 0.04, T0, end)).spike(new Spike("guard-travel", 0.04, T0, end))
        .plant(new Plant("roam-zoneb", "guard-travel", 0.05, T0, stop));
    DriftMonitor scales = new DriftMonitor(DriftSettings.defaults(), "all");
    DriftMonitor recentOnly = new DriftMonitor(DriftSettings.defaults().withShortHalfLives(List.of()), "all");
    CohortFloor floor = CohortFloor.defaults();
    stream.feed(T0, stop - DAY_MILLIS, 3 * 6000);
    long step = 15 * MINUTE;
    AlertEvent viaScales = null;
    AlertEvent viaRecent = null;
    for (long t = stop - DAY_MILLIS; t < end; t += step) {
      stream.feed(t, t + step, (int) (6000 * step / DAY_MILLIS));
      PairTable table = stream.refresh(t + step);
      FlooredTable view = FlooredTable.of(table, floor);
      for (AlertEvent e : scales.observe(view, table.watermarkMillis())) {
        assertRaisedFading(e);
        viaScales = viaScales == null ? e : viaScales;
      }
      for (AlertEvent e : recentOnly.observe(view, table.watermarkMillis())) {
        assertRaisedFading(e);
        viaRecent = viaRecent == null ? e : viaRecent;
      }
    }
    assertNotNull(viaScales, "the stopped pair is alerted with the short scales");
    assertTrue(viaScales.atMillis() > stop, viaScales.toString());
    assertTrue(viaScales.evidence().recentHalfLifeMillis() < Duration.ofHours(6).toMillis(),
        "entered on a short scale: " + viaScales.summary());
    assertTrue(viaScales.summary().contains("(half-life 1 h)") || viaScales.summary().contains("(half-life 2 h)"),
        viaScales.summary());
    assertTrue(viaRecent == null || viaScales.atMillis() <= viaRecent.atMillis(),
        "short scales at " + (viaScales.atMillis() - stop) / MINUTE + " min, recent decay alone at "
            + (viaRecent == null ? "never" : (viaRecent.atMillis() - stop) / MINUTE + " min"));
  }

  private static void assertRaisedFading(AlertEvent e) {
    assertEquals(AlertTransition.RAISED, e.transition(), e.toString());
    assertEquals(AlertKind.FADING, e.kind(), e.toString());
    assertEquals(PairKey.of("roam-zoneb", "guard-travel"), e.pair());
  }
}
