package org.pairpulse.serve.trend;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;

/** The trend history's bounds: the ring of points, what a point records, pinning; the alert history's bound. */
class TrendHistoryTest {

  private static FlooredTable table(long version, double abCount) {
    return FlooredTable.of(Tables.defaultHorizons().baskets(1000).item("a", 100).item("b", 100).item("c", 100)
        .item("d", 100).pair("a", "b", abCount).pair("c", "d", 5).pair("a", "c", 10).build(version), CohortFloor.none());
  }

  @Test
  void keepsTheNewestPointsAndOnlyTheChosenPairs() {
    TrendHistory history = new TrendHistory(3, 1, 1, 2); // 3 points, the best pair, the top item, 2 pinned
    for (long v = 1; v <= 5; v++) {
      history.record(table(v, 10 * v), Set.of());
    }
    assertEquals(3, history.size());
    TrendHistory.Series ab = history.pairSeries(PairKey.of("a", "b"));
    assertEquals(List.of(3L, 4L, 5L), ab.versions(), "the oldest two points were dropped");
    assertEquals(List.of(30.0, 40.0, 50.0), ab.values().get("day").get("pairBaskets"));
    assertEquals(0, history.pairSeries(PairKey.of("c", "d")).versions().size(), "not the best pair, not pinned");
    history.pin(PairKey.of("d", "c"));
    history.record(table(6, 60), Set.of(PairKey.of("a", "c"))); // a drifting pair is recorded too
    assertEquals(List.of(6L), history.pairSeries(PairKey.of("c", "d")).versions());
    assertEquals(List.of(6L), history.pairSeries(PairKey.of("a", "c")).versions());
    // pinning is bounded: the least recently asked is dropped
    history.pin(PairKey.of("a", "c"));
    history.pin(PairKey.of("b", "c"));
    history.pin(PairKey.of("a", "d"));
    history.record(table(7, 70), Set.of());
    assertEquals(List.of(6L), history.pairSeries(PairKey.of("c", "d")).versions(), "unpinned: no point at 7");
    TrendHistory.Series item = history.itemSeries("a");
    assertTrue(item.versions().contains(7L));
    assertEquals(0.1, item.values().get("baseline").get("share").get(0), 1e-6);
  }

  @Test
  void alertHistoryIsBoundedAndNewestFirst() {
    AlertHistory history = new AlertHistory(2);
    for (int i = 0; i < 3; i++) {
      history.add(AlertEvent.of(AlertKind.FADING, AlertTransition.RAISED, i == 2 ? "web" : "all", PairKey.of("a", "b"),
          1000L * i, 1000L * i, i, null));
    }
    assertEquals(2, history.size());
    assertEquals(List.of(2000L, 1000L), history.newest(null, 10).stream().map(AlertEvent::atMillis).toList());
    assertEquals(List.of(1000L), history.newest("all", 10).stream().map(AlertEvent::atMillis).toList());
  }
}
