package org.pairpulse.serve.internal;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.TreeMap;
import java.util.function.Supplier;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.alerts.AlertDispatcher;
import org.pairpulse.serve.alerts.AlertLeadership;
import org.pairpulse.serve.alerts.AlertStates;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.DriftEntry;
import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.drift.DriftReport;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableSource;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The watcher's round ({@link #catchUp}): adds discovered segments, and per new table version of a segment builds
 * the floored view, prepares the suggestion index, publishes the view to requests, records a trend point, runs drift
 * detection and the alert state machine, then hands the round's alert events on (to the dispatcher, or in group mode
 * through the alert leadership first). One thread at a time (synchronized); requests only read the published views.
 */
final class RefreshLoop {
  private static final Logger LOG = LoggerFactory.getLogger(RefreshLoop.class);

  private final Segments segments;
  private final CohortFloor floor;
  private final Suggester suggester;
  private final Supplier<Map<String, ? extends PairTableSource>> discovered;
  private final EventClock alertClock;
  private final AlertDispatcher dispatcher;
  private final GroupStatus group;
  /** Group mode: who publishes the group's alerts (null: this instance publishes its own). */
  private final AlertLeadership leadership;
  private final ServeMeters meters;
  private final Set<String> refusedNames = new HashSet<>();
  /** Discovered segments not served yet: the table version last found under the floor. */
  private final Map<String, Long> hiddenVersions = new HashMap<>();
  /** Alert states taken over for segments not served yet. */
  private final Map<String, DriftMonitor.AlertState> pendingAlertStates = new HashMap<>();
  /** Whether this instance led at the last table (its machines hold the group's alert state). */
  private boolean leadingNow;

  /**
   * @param discovered segments found while running, or null
   * @param alertClock the clock of alert dwell and cooldown, or null for event time (the table's watermark)
   * @param leadership group mode's alert leadership, or null
   */
  RefreshLoop(Segments segments, CohortFloor floor, Suggester suggester,
      Supplier<Map<String, ? extends PairTableSource>> discovered, EventClock alertClock, AlertDispatcher dispatcher,
      GroupStatus group, AlertLeadership leadership, ServeMeters meters) {
    this.segments = segments;
    this.floor = floor;
    this.suggester = suggester;
    this.discovered = discovered;
    this.alertClock = alertClock;
    this.dispatcher = dispatcher;
    this.group = group;
    this.leadership = leadership;
    this.meters = meters;
  }

  /** Processes any new table version of every segment now. */
  synchronized void catchUp() {
    discover();
    boolean leading = leadership == null || leadOrFollow();
    // a partial group view is not the group's table: drift and alerts wait for a whole one (the view is served)
    boolean whole = group.coverage().map(c -> !c.partial()).orElse(true);
    List<AlertEvent> round = new ArrayList<>();
    for (SegmentState segment : segments.all()) {
      PairTable table = segment.source().current();
      if (table.version() == segment.processedVersion) {
        continue;
      }
      FlooredTable view = FlooredTable.of(table, floor);
      suggester.prepare(view); // the index is built here, not by the first request of the version
      segment.view(view);
      if (table.version() > 0 && whole) {
        long now = alertClock != null ? alertClock.millis() : table.watermarkMillis();
        List<AlertEvent> events = segment.drift().observe(view, now);
        segment.trend().record(view, drifting(segment.drift().report()));
        round.addAll(events);
      }
      segment.processedVersion = table.version();
    }
    if (leadership == null) {
      dispatcher.dispatch(round);
    } else if (leading && !round.isEmpty()) {
      if (leadership.publish(round, AlertStates.encode(alertStates()))) {
        dispatcher.dispatch(round); // history, webhook and extra sinks; the alerts topic had them in the publication
      } else {
        LOG.warn("{} alert events not published: another instance leads the group's alerts now", round.size());
        leadingNow = false;
      }
    }
    meters.discover();
  }

  /**
   * Adds the discovered segments not served yet, once their table's N passes the cohort floor in some horizon
   * (names that break {@link ServeServer#SEGMENT_NAME} are logged once).
   */
  private void discover() {
    if (discovered == null) {
      return;
    }
    for (Map.Entry<String, ? extends PairTableSource> e : discovered.get().entrySet()) {
      String name = e.getKey();
      if (segments.contains(name)) {
        continue;
      }
      if (!ServeServer.SEGMENT_NAME.matcher(name).matches()) {
        if (refusedNames.add(name)) {
          LOG.warn("segment name '{}' is not served: names are {}", name.length() > 100 ? name.substring(0, 100) : name,
              ServeServer.SEGMENT_NAME.pattern());
        }
        continue;
      }
      PairTable table = e.getValue().current();
      if (hiddenVersions.getOrDefault(name, -1L) == table.version()) {
        continue;
      }
      FlooredTable view = FlooredTable.of(table, floor);
      if (view.horizonNames().stream().noneMatch(h -> !Double.isNaN(view.baskets(h)))) {
        hiddenVersions.put(name, table.version()); // N under the floor everywhere: not named yet
        continue;
      }
      hiddenVersions.remove(name);
      segments.add(name, e.getValue(), pendingAlertStates.remove(name));
      LOG.info("serving segment '{}'", name);
    }
  }

  /**
   * Group mode: whether this instance publishes this round's alerts. On becoming the leader its alert machines take
   * the state the previous leader published last (so that no alert repeats or goes missing); a follower's machines
   * run on its own tables (the dashboard's shifting pairs), their events unpublished.
   */
  private boolean leadOrFollow() {
    if (!leadership.leading()) {
      leadingNow = false;
      return false;
    }
    if (leadingNow) {
      return true;
    }
    Optional<byte[]> state;
    try {
      state = leadership.takeOver();
    } catch (RuntimeException e) {
      LOG.warn("cannot take over the group's alerts now ({}); trying again at the next table", e.toString());
      return false;
    }
    Map<String, DriftMonitor.AlertState> states = state.map(AlertStates::decode).orElse(Map.of());
    pendingAlertStates.clear();
    for (SegmentState segment : segments.all()) {
      // a segment without published state: no alert of it was ever published, so no track carries over, but the
      // stream's start as this instance saw it stays (the decays' ages)
      segment.drift().restore(states.getOrDefault(segment.name(),
          new DriftMonitor.AlertState(segment.drift().alertState().firstWatermarkMillis(), List.of())));
    }
    states.forEach((name, s) -> {
      if (!segments.contains(name)) {
        pendingAlertStates.put(name, s);
      }
    });
    LOG.info("leading the group's alerts from now on ({} segments' alert state taken over)", states.size());
    leadingNow = true;
    return true;
  }

  /** Every served segment's alert state, by name. */
  private Map<String, DriftMonitor.AlertState> alertStates() {
    Map<String, DriftMonitor.AlertState> out = new TreeMap<>(pendingAlertStates);
    segments.all().forEach(segment -> out.put(segment.name(), segment.drift().alertState()));
    return out;
  }

  /** Pairs the trend records because they drift: the 20 strongest of each kind. */
  private static Set<PairKey> drifting(DriftReport report) {
    Set<PairKey> pairs = new LinkedHashSet<>();
    for (AlertKind kind : AlertKind.values()) {
      report.of(kind).stream().limit(20).map(DriftEntry::finding).forEach(f -> pairs.add(f.pair()));
    }
    return pairs;
  }
}
