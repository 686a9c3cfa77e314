package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/** The first refresh of each simulated (UTC) day, and the raised alerts counted across refreshes. */
class SimulatedDaysTest {
  static final long HOUR = 3_600_000L;

  static AlertEvent event(AlertTransition transition) {
    return new AlertEvent("id", AlertKind.EMERGING, transition, "all", new PairKey("a", "b"), 0, 0, 1, null, null, "");
  }

  @Test
  void firstRefreshOfEachDayOnlyOnHourlyRefreshesOverThreeDays() {
    SimulatedDays days = new SimulatedDays();
    List<Long> firsts = new ArrayList<>();
    long start = 20_000 * BacktestSettings.DAY_MILLIS + 5 * HOUR; // day 20,000 from 05:00
    for (long at = start; at < start + 3 * BacktestSettings.DAY_MILLIS; at += HOUR) {
      if (days.refreshed(at, List.of())) {
        firsts.add(at);
      }
    }
    // the oracle: 05:00 of the first day, then each midnight after it
    assertEquals(List.of(start, 20_001 * BacktestSettings.DAY_MILLIS, 20_002 * BacktestSettings.DAY_MILLIS,
        20_003 * BacktestSettings.DAY_MILLIS), firsts);
  }

  @Test
  void countsRaisedAlertsOnlyAndKeepsCountingWithinADay() {
    SimulatedDays days = new SimulatedDays();
    assertTrue(days.refreshed(0, List.of(event(AlertTransition.RAISED), event(AlertTransition.RESOLVED))));
    assertFalse(days.refreshed(HOUR, List.of(event(AlertTransition.RAISED), event(AlertTransition.RAISED))));
    assertEquals(3, days.raised());
    assertTrue(days.refreshed(-HOUR, List.of()), "a refresh before midnight of day 0 lies on day -1");
    assertEquals(3, days.raised());
  }
}
