package org.pairpulse.serve.alerts;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import org.pairpulse.sketch.time.ManualClock;

/**
 * Two servers on the same tables, one leading the alerts at a time (a group's instances): the leader's alert state
 * travels with its publications, so that after a hand-over the successor neither raises the same alert again nor
 * misses its resolution, and a follower publishes nothing. The publication log here is an in-memory stand-in for the
 * Kafka transaction (ops' GroupPipelineTest runs the real one): it keeps what was committed, and refuses the
 * publication of an instance that no longer leads, as fencing does.
 */
class AlertLeadershipTest {
  /** The pair {x, y} rises from lift 1 to 2.5 (entering), then falls back (exiting). */
  private static PairTable table(long version, boolean rising) {
    return Tables.defaultHorizons().baskets(10_000).item("x", 2000).item("y", 2000).item("z", 2000)
        .pair("x", "y", 400).pair("x", "z", 400).pair("recent", "x", "y", rising ? 1000 : 400).build(version);
  }

  /** What the group committed: events and the newest alert state; who leads now. */
  private static final class Log {
    final List<AlertEvent> events = new ArrayList<>();
    byte[] state;
    String leader;
    int takeOvers;

    AlertLeadership member(String name) {
      return new AlertLeadership() {
        @Override
        public boolean leading() {
          return name.equals(leader);
        }

        @Override
        public Optional<byte[]> takeOver() {
          takeOvers++;
          return Optional.ofNullable(state);
        }

        @Override
        public boolean publish(List<AlertEvent> published, byte[] newState) {
          if (!name.equals(leader)) {
            return false; // fenced
          }
          events.addAll(published);
          state = newState;
          return true;
        }
      };
    }
  }

  @Test
  void aHandOverNeitherRepeatsNorDropsAnAlert() {
    ManualClock clock = new ManualClock(1_772_409_600_000L);
    PairTableHolder tables = new PairTableHolder();
    Log log = new Log();
    log.leader = "a";
    ServeConfig config = ServeConfig.defaults().with(ServeConfig.PORT, 0).with(ServeConfig.WATCH_MILLIS, 60_000);
    try (ServeServer a = ServeServer.builder().config(config).segment("all", tables).alertClock(clock)
            .alertLeadership(log.member("a")).build().start();
        ServeServer b = ServeServer.builder().config(config).segment("all", tables).alertClock(clock)
            .alertLeadership(log.member("b")).build().start()) {
      long version = 0;
      for (int i = 0; i < 4; i++) { // every 10 minutes: pending at 0 and 10, raised at 20 (dwell 15 min), held at 30
        tables.publish(table(++version, true));
        a.catchUp();
        b.catchUp();
        clock.advance(TimeUnit.MINUTES.toMillis(10));
      }
      assertEquals(1, log.events.size(), "raised once, by the leader: " + log.events);
      assertEquals(0, b.alertHistory().size(), "the follower publishes nothing");
      log.leader = "b"; // the designated partition moved
      for (int i = 0; i < 2; i++) {
        tables.publish(table(++version, true));
        a.catchUp();
        b.catchUp();
        clock.advance(TimeUnit.MINUTES.toMillis(10));
      }
      assertEquals(1, log.events.size(), "not raised again by the successor: " + log.events);
      for (int i = 0; i < 4; i++) { // exit holds: clearing, resolved after the dwell
        tables.publish(table(++version, false));
        a.catchUp();
        b.catchUp();
        clock.advance(TimeUnit.MINUTES.toMillis(10));
      }
      assertEquals(List.of(AlertTransition.RAISED, AlertTransition.RESOLVED),
          log.events.stream().map(AlertEvent::transition).toList(), log.events.toString());
      assertEquals(2, new HashSet<>(log.events.stream().map(AlertEvent::id).toList()).size());
      assertEquals(log.events.get(0).atMillis(), log.events.get(1).sinceMillis(),
          "the successor resolves the alert its predecessor raised");
      assertTrue(log.takeOvers >= 2, "each leader took over once: " + log.takeOvers);
      assertEquals(1, b.alertHistory().size(), "the successor's history holds what it published");
    }
  }
}
