package org.pairpulse.serve.drift;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.table.PairStats;

/**
 * Drift detection for one segment: compares {@code recent} with {@code baseline} for every pair
 * published in both (so the cohort floor applies to alerts too), feeds the {@link AlertMachine}
 * and keeps the newest {@link DriftReport}.
 *
 * <p>Cost: one pass over the published pairs per table version (a hash lookup and a few logarithms
 * each). Thread-safety: {@link #observe} from one thread; {@link #report()} from any.
 */
public final class DriftMonitor {
  private final DriftSettings settings;
  private final String segment;
  private final AlertMachine machine;
  private volatile DriftReport report;

  public DriftMonitor(DriftSettings settings, String segment) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.segment = Objects.requireNonNull(segment, "segment");
    this.machine = new AlertMachine(settings, segment);
    this.report = DriftReport.empty(segment);
  }

  public DriftSettings settings() {
    return settings;
  }

  /** The finding of {a, b} in {@code table}, if the pair is published in both horizons. */
  public Optional<DriftFinding> finding(FlooredTable table, PairKey pair) {
    Optional<PairStats> recent = table.pair(pair.first(), pair.second(), settings.recentHorizon());
    Optional<PairStats> baseline = table.pair(pair.first(), pair.second(), settings.baselineHorizon());
    return recent.isPresent() && baseline.isPresent()
        ? Optional.of(DriftFinding.of(recent.get(), baseline.get(), factor(table, settings.recentHorizon()),
            factor(table, settings.baselineHorizon())))
        : Optional.empty();
  }

  /** Effective counts per count of a horizon: 1 for a known window, 2 for a decay (or an unknown horizon). */
  private static double factor(FlooredTable table, String horizon) {
    return DriftStatistics.decayEffectiveCountFactor(table.floor().isWindow(horizon));
  }

  /** Observes one table version at {@code nowMillis}; returns the alert events it caused. */
  public synchronized List<AlertEvent> observe(FlooredTable table, long nowMillis) {
    List<DriftFinding> entering = new ArrayList<>();
    int compared = 0;
    double recentFactor = factor(table, settings.recentHorizon());
    double baselineFactor = factor(table, settings.baselineHorizon());
    for (PairStats recent : table.pairs(settings.recentHorizon())) {
      Optional<PairStats> baseline = table.pair(recent.itemA(), recent.itemB(), settings.baselineHorizon());
      if (baseline.isEmpty()) {
        continue;
      }
      compared++;
      if (!DriftFinding.mayEnter(recent, baseline.get(), recentFactor, baselineFactor, settings)) {
        continue;
      }
      DriftFinding finding = DriftFinding.of(recent, baseline.get(), recentFactor, baselineFactor);
      for (AlertKind kind : AlertKind.values()) {
        if (finding.enters(kind, settings)) {
          entering.add(finding);
          break;
        }
      }
    }
    List<AlertEvent> events = machine.step(nowMillis, table.version(), entering,
        pair -> finding(table, pair).orElse(null));
    report = buildReport(table.version(), nowMillis, compared);
    return events;
  }

  private DriftReport buildReport(long version, long nowMillis, int compared) {
    Map<AlertKind, List<DriftEntry>> byKind = new EnumMap<>(AlertKind.class);
    for (AlertKind kind : AlertKind.values()) {
      List<DriftEntry> entries = new ArrayList<>();
      for (Map.Entry<PairKey, AlertMachine.Track> entry : machine.tracks(kind)) {
        AlertMachine.Track track = entry.getValue();
        if (track.last() == null
            || (track.state() == AlertMachine.State.COOLDOWN && !track.last().enters(kind, settings))) {
          continue; // cooling down and no longer drifting: nothing to report
        }
        Long raised = track.raisedAtMillis() == Long.MIN_VALUE ? null : track.raisedAtMillis();
        entries.add(new DriftEntry(kind, track.state(), track.sinceMillis(), raised, track.last()));
      }
      Comparator<DriftEntry> strongest = kind == AlertKind.BUNDLE
          ? Comparator.comparingDouble((DriftEntry e) -> -e.finding().recentPairBaskets())
          : Comparator.comparingDouble((DriftEntry e) -> -Math.abs(e.finding().signedRootG2()));
      entries.sort(strongest.thenComparing(e -> e.finding().pair().first()).thenComparing(e -> e.finding().pair().second()));
      byKind.put(kind, entries.size() > settings.maxReported() ? entries.subList(0, settings.maxReported()) : entries);
    }
    return new DriftReport(segment, version, nowMillis, compared, byKind.get(AlertKind.EMERGING),
        byKind.get(AlertKind.FADING), byKind.get(AlertKind.BUNDLE));
  }

  /** The newest report. */
  public DriftReport report() {
    return report;
  }

  /** The state of a pair and kind, if not idle. */
  public synchronized Optional<AlertMachine.State> state(PairKey pair, AlertKind kind) {
    AlertMachine.Track track = machine.track(pair, kind);
    return track == null ? Optional.empty() : Optional.of(track.state());
  }
}
