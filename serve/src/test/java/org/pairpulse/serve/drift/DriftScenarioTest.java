package org.pairpulse.serve.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.pairpulse.serve.fixtures.InventedStream.DAY_MILLIS;
import static org.pairpulse.serve.fixtures.InventedStream.T0;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.fixtures.InventedStream;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.fixtures.BasketStream.Plant;
import org.pairpulse.sketch.fixtures.BasketStream.Spike;

/**
 * A 21-day invented stream with answers known in advance (the demo scenario's planted events, in
 * small): through a real {@link org.pairpulse.sketch.engine.PairEngine}, the cohort floor and the
 * monitor, exactly the planted alerts are raised, each once, after its start, and the popularity
 * spike raises none.
 */
class DriftScenarioTest {
  private static final long HOUR = Duration.ofHours(1).toMillis();

  @Test
  void plantedEventsAndOnlyThoseRaiseAlerts() {
    long emergingFrom = T0 + 18 * DAY_MILLIS + 18 * HOUR;
    long fadingFrom = T0 + 17 * DAY_MILLIS;
    long bundleFrom = T0 + 19 * DAY_MILLIS;
    long end = T0 + 21 * DAY_MILLIS;
    InventedStream stream = new InventedStream(7, 300, EngineConfig.builder().trackedPairCapacity(4096).build())
        // emerging: both items sell all along, together only from day 18 evening
        .spike(new Spike("pack-esports", 0.03, T0, end)).spike(new Spike("boost-lowlat", 0.03, T0, end))
        .plant(new Plant("pack-esports", "boost-lowlat", 0.04, emergingFrom, end))
        // fading: together until day 17, then each on its own
        .plant(new Plant("roam-zoneb", "guard-travel", 0.05, T0, fadingFrom))
        .spike(new Spike("roam-zoneb", 0.04, T0, end)).spike(new Spike("guard-travel", 0.04, T0, end))
        // new bundle: apart until day 19, then only ever together
        .spike(new Spike("device-x1", 0.02, T0, bundleFrom)).spike(new Spike("case-x1", 0.02, T0, bundleFrom))
        .plant(new Plant("device-x1", "case-x1", 0.03, bundleFrom, end))
        // noise: one charger's popularity alone jumps for day 19
        .spike(new Spike("charger-9", 0.02, T0, end)).spike(new Spike("charger-9", 0.15, bundleFrom, bundleFrom + DAY_MILLIS));
    DriftMonitor monitor = new DriftMonitor(DriftSettings.defaults(), "all");
    CohortFloor floor = CohortFloor.defaults();
    int basketsPerDay = 4000;
    stream.feed(T0, T0 + 16 * DAY_MILLIS, 16 * basketsPerDay);
    List<AlertEvent> events = new ArrayList<>();
    long step = 2 * HOUR;
    for (long t = T0 + 16 * DAY_MILLIS; t < end; t += step) {
      stream.feed(t, t + step, (int) (basketsPerDay * step / DAY_MILLIS));
      FlooredTable table = FlooredTable.of(stream.refresh(t + step), floor);
      events.addAll(monitor.observe(table, table.table().watermarkMillis()));
    }
    Set<String> raised = new TreeSet<>();
    for (AlertEvent e : events) {
      assertEquals(AlertTransition.RAISED, e.transition(), "unexpected " + e);
      raised.add(e.kind().wireName() + " " + e.pair());
    }
    assertEquals(Set.of("emerging " + PairKey.of("pack-esports", "boost-lowlat"),
        "emerging " + PairKey.of("device-x1", "case-x1"), // a new bundle is also a rise of association
        "fading " + PairKey.of("roam-zoneb", "guard-travel"),
        "bundle " + PairKey.of("device-x1", "case-x1")), raised, raised.toString());
    assertEquals(4, events.size(), "each alert exactly once: " + events);
    for (AlertEvent e : events) {
      long start = switch (e.kind()) {
        case EMERGING -> e.pair().first().equals("case-x1") ? bundleFrom : emergingFrom;
        case FADING -> fadingFrom;
        case BUNDLE -> bundleFrom;
      };
      assertTrue(e.sinceMillis() > start, e.toString());
      assertTrue(e.atMillis() - start < 2 * DAY_MILLIS, "detected within two days: " + e);
      assertTrue(e.atMillis() - e.sinceMillis() >= DriftSettings.defaults().minDwellMillis());
    }
    DriftReport report = monitor.report();
    DriftEntry esports = report.emerging().stream()
        .filter(e -> e.finding().pair().equals(PairKey.of("pack-esports", "boost-lowlat"))).findFirst().orElseThrow();
    assertEquals(AlertMachine.State.ACTIVE, esports.state());
    assertTrue(esports.finding().rateRatio() > 1.5 && esports.finding().oddsRatioRatio() > 1.5, esports.toString());
    assertEquals(DriftChange.BOTH, esports.change(), esports.summary());
    assertTrue(report.fading().stream().anyMatch(e -> e.finding().pair().equals(PairKey.of("roam-zoneb", "guard-travel"))));
    assertTrue(report.pairsCompared() > 100);
  }
}
