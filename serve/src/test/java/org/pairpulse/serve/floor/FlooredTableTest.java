package org.pairpulse.serve.floor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/** The cohort floor: what is published and what is held back. */
class FlooredTableTest {

  @Test
  void windowHorizonsUseTheirOwnLowerBounds() {
    // ab: 60 baskets but a lower bound of 45 in day (sketch error): suppressed there; exact 60 in baseline: shown
    PairTable table = twoItems()
        .pair("recent", "a", "b", 60).pair("baseline", "a", "b", 60)
        .pair("day", "a", "b", new Estimate(60, 45, 60)).build(1);
    FlooredTable floored = floor(table);
    assertTrue(floored.pair("a", "b", "baseline").isPresent());
    assertTrue(floored.pair("a", "b", "day").isEmpty());
    assertTrue(floored.neighbours("a", "day").isEmpty());
    assertEquals(1, floored.pairs("baseline").size());
    assertEquals(Double.valueOf(1000), floored.baskets("day"));
  }

  @Test
  void aLongWindowBorrowsTheTighterLowerBoundOfAShorterWindowInsideIt() {
    // a pair admitted today: baseline's admission pane carries a day's sketch error (lower bound 10), while
    // day's hourly panes hold 70 exact baskets, which are baskets of baseline too (day lies inside baseline)
    PairTable table = twoItems()
        .pair("recent", "a", "b", 70).pair("day", "a", "b", 70)
        .pair("baseline", "a", "b", new Estimate(75, 10, 80)).build(1);
    FlooredTable floored = floor(table);
    assertTrue(floored.pair("a", "b", "baseline").isPresent());
    assertTrue(floored.pair("a", "b", "recent").isPresent(), "decays borrow the same evidence");
    // never the other way: a long window's bound says nothing about a shorter window's baskets
    PairTable shortThin = twoItems()
        .pair("recent", "a", "b", 70).pair("day", "a", "b", new Estimate(40, 30, 40))
        .pair("baseline", "a", "b", 400).build(1);
    FlooredTable other = floor(shortThin);
    assertTrue(other.pair("a", "b", "day").isEmpty());
    assertTrue(other.pair("a", "b", "baseline").isPresent());
  }

  @Test
  void decayHorizonBorrowsTheLongestWindowsEvidence() {
    // recent (decay) holds a large decayed count, but only 40 distinct baskets stand behind it in baseline
    PairTable thin = twoItems()
        .pair("recent", "a", "b", 90).pair("day", "a", "b", 40).pair("baseline", "a", "b", 40).build(1);
    assertTrue(floor(thin).pair("a", "b", "recent").isEmpty());
    // and the other way: a small decayed count is shown when baseline has 60 baskets
    PairTable thick = twoItems()
        .pair("recent", "a", "b", 3).pair("day", "a", "b", 3).pair("baseline", "a", "b", 60).build(1);
    FlooredTable floored = floor(thick);
    assertEquals(3.0, floored.pair("b", "a", "recent").orElseThrow().counts().countAB().value());
    assertTrue(floored.pair("a", "b", "day").isEmpty());
    assertEquals(List.of("baseline"), floored.evidenceHorizon().stream().toList());
  }

  @Test
  void itemsAndBasketTotalsObeyTheFloorToo() {
    PairTable table = Tables.defaultHorizons().baskets(1000).baskets("day", 30).item("a", 100).item("rare", 20)
        .item("b", 100).pair("a", "b", 60).pair("a", "rare", 20).build(1);
    FlooredTable floored = floor(table);
    assertTrue(floored.itemCount("a", "baseline").isPresent());
    assertTrue(floored.itemCount("rare", "baseline").isEmpty());
    assertTrue(floored.pair("a", "rare", "baseline").isEmpty());
    assertTrue(Double.isNaN(floored.baskets("day")));
    // every pair in every horizon list and neighbour list passes
    for (String h : floored.horizonNames()) {
      for (PairStats p : floored.pairs(h)) {
        assertFalse(p.contains("rare"));
      }
    }
    assertEquals(3, floored.suppressedPairs()); // {a, rare} in three horizons
  }

  @Test
  void zeroFloorPublishesEverythingInTableOrder() {
    PairTable table = twoItems().item("c", 10)
        .pair("a", "b", 5).pair("a", "c", 5).build(1);
    FlooredTable floored = FlooredTable.of(table, CohortFloor.none());
    assertEquals(table.pairs("day"), floored.pairs("day"));
    assertEquals(table.neighbours("a", "recent"), floored.neighbours("a", "recent"));
    assertEquals(0, floored.suppressedPairs());
  }

  @Test
  void pairKeyIsUnordered() {
    assertEquals(PairKey.of("b", "a"), PairKey.of("a", "b"));
    assertEquals("a", PairKey.of("b", "a").first());
  }

  /** 1,000 baskets in every default horizon, items a and b in 100 each. */
  private static Tables twoItems() {
    return Tables.defaultHorizons().baskets(1000).item("a", 100).item("b", 100);
  }

  private static FlooredTable floor(PairTable table) {
    return FlooredTable.of(table, CohortFloor.defaults());
  }
}
