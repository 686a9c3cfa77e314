package org.pairpulse.ops.product.evaluation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairTable;

/** The nightly baseline keeps the first table of each day. */
class NightlyRebuildTest {
  static final long DAY = Duration.ofDays(1).toMillis();
  static final long MIDNIGHT = 1_780_272_000_000L; // 2026-06-01T00:00Z

  static FlooredTable table(long version) {
    return FlooredTable.of(new PairTable(version, 0, 0, Measure.SHRUNK_LIFT, Map.of(), List.of()), CohortFloor.none());
  }

  @Test
  void theFirstTableOfEachDayIsKeptForTheDay() {
    NightlyRebuild nightly = NightlyRebuild.daily(table(0));
    long version = 0;
    long step = Duration.ofMinutes(5).toMillis();
    for (long t = MIDNIGHT; t < MIDNIGHT + 3 * DAY; t += step) {
      FlooredTable fresh = table(++version);
      boolean taken = nightly.offer(t, fresh);
      assertEquals((t - MIDNIGHT) % DAY == 0, taken, "at " + (t - MIDNIGHT) / step);
      long dayStartVersion = (t - MIDNIGHT) / DAY * (DAY / step) + 1;
      assertEquals(dayStartVersion, nightly.current().version());
    }
    assertEquals(3, nightly.rebuilds());
  }

  @Test
  void aDayWithoutTablesKeepsTheOldOneUntilTheNextOffer() {
    FlooredTable initial = table(0);
    NightlyRebuild nightly = NightlyRebuild.daily(initial);
    assertSame(initial, nightly.current());
    assertTrue(nightly.offer(MIDNIGHT + 3_600_000, table(1)));
    assertFalse(nightly.offer(MIDNIGHT + DAY - 1, table(2)));
    assertTrue(nightly.offer(MIDNIGHT + 3 * DAY + 7, table(3)));
    assertEquals(3, nightly.current().version());
  }
}
