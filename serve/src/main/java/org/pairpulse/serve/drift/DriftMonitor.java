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
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;

/**
 * Drift detection for one segment: compares the recent period with the reference period (by default
 * {@code recent} against the engine's tracking decay) for every pair published in both (so the cohort floor applies
 * to alerts too), feeds the {@link AlertMachine} and keeps the newest {@link DriftReport}.
 *
 * <h2>Several scales</h2>
 * Each pair is tested against the same reference with the recent decay's counts (half-life 6 h by default), and
 * with shorter decays the monitor derives from successive tables ({@link ShortScale}, half-lives
 * {@link DriftSettings#shortHalfLivesMillis}, 1 h and 2 h by default), which see the first hours of a change that
 * the recent decay still averages away (a pair that stops selling in the evening, a pair that starts in a busy
 * hour): the 1-hour scale answers first when traffic is high, the 2-hour one holds steadier evidence when it is low.
 * Every scale tests at the Bonferroni-corrected root {@link DriftStatistics#rootForTests} (k scales: p / k each), so
 * all of them together keep the false-alarm bound of one. The gates that read the table (associated beyond basket
 * size now or before, the bundle confidences) read the recent horizon at every scale. An alert enters when any
 * scale enters and stays active while any holds.
 *
 * <p>Cost: one pass over the table's rows per version that reads counts only (the floor, then a screen of a few
 * logarithms per scale, {@link DriftFinding#mayEnter}); only the pairs the screen lets through compute their measures
 * and findings, in the recent horizon's order. The short scales' pass reads the rows' counts too. Thread-safety: {@link #observe} from one thread;
 * {@link #report()} from any.
 */
public final class DriftMonitor {
  private final DriftSettings settings;
  /** {@link #settings} with the entry root corrected for the number of scales tested (see the class comment). */
  private final DriftSettings tested;
  private final String segment;
  private final AlertMachine machine;
  private final List<ShortScale> shortScales = new ArrayList<>();
  private volatile DriftReport report;
  /** The watermark of the first table observed: the start of the stream as far as the decays' ages go. */
  private long firstWatermarkMillis = Long.MIN_VALUE;

  public DriftMonitor(DriftSettings settings, String segment) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.segment = Objects.requireNonNull(segment, "segment");
    // one scale per short half-life beside the recent decay (a short scale not shorter than the table's recent decay
    // is not tested, and the threshold then errs high: fewer alerts, never more)
    int scales = 1 + settings.shortHalfLivesMillis().size();
    this.tested = settings.withRootG2(DriftStatistics.rootForTests(settings.enterRootG2(), scales),
        settings.exitRootG2());
    this.machine = new AlertMachine(tested, segment);
    for (long halfLife : settings.shortHalfLivesMillis()) {
      shortScales.add(new ShortScale(halfLife, settings.recentHorizon()));
    }
    this.report = DriftReport.empty(segment);
  }

  public DriftSettings settings() {
    return settings;
  }

  /** The alert state of this segment (group mode: the alert leader's travels to its successor). */
  public synchronized AlertState alertState() {
    return new AlertState(firstWatermarkMillis, machine.exportTracks());
  }

  /** Replaces the alert state with one taken from another instance ({@link #alertState()}). */
  public synchronized void restore(AlertState state) {
    firstWatermarkMillis = state.firstWatermarkMillis();
    machine.restoreTracks(state.tracks());
  }

  /**
   * @param firstWatermarkMillis the watermark of the first table observed (the stream's start for the decays' ages)
   * @param tracks the alert machine's non-idle tracks
   */
  public record AlertState(long firstWatermarkMillis, List<AlertMachine.TrackState> tracks) {
    public AlertState {
      tracks = List.copyOf(tracks);
    }
  }

  /** The finding of {a, b} in {@code table}, if the pair is published in both horizons. */
  public synchronized Optional<DriftFinding> finding(FlooredTable table, PairKey pair) {
    return Optional.ofNullable(finding(table, pair, factors(table), null));
  }

  /**
   * The finding of {a, b} for {@code kind} (null: the recent scale's): the first scale that enters {@code kind}, else
   * the first that holds it (does not exit), else the recent scale's, the recent scale first, then the short scales
   * from the shortest; null when the pair is not published in both horizons.
   */
  private DriftFinding finding(FlooredTable table, PairKey pair, Factors factors, AlertKind kind) {
    Optional<PairStats> recent = table.pair(pair.first(), pair.second(), settings.recentHorizon());
    Optional<PairStats> reference = table.pair(pair.first(), pair.second(), factors.referenceHorizon());
    if (recent.isEmpty() || reference.isEmpty()) {
      return null;
    }
    PairCounts counts = referenceCounts(recent.get(), reference.get(), factors);
    DriftFinding atRecent = DriftFinding.of(recent.get(), recent.get().counts(), factors.recentHalfLife(),
        reference.get(), counts, factors.recent(), factors.reference(), tested);
    if (kind == null || atRecent.enters(kind, tested)) {
      return atRecent;
    }
    List<DriftFinding> scales = new ArrayList<>();
    scales.add(atRecent);
    for (ShortScale scale : shortScales) {
      DriftFinding atShort = shortFinding(scale, recent.get(), reference.get(), counts, factors, false);
      if (atShort != null) {
        scales.add(atShort);
      }
    }
    for (DriftFinding f : scales) {
      if (f.enters(kind, tested)) {
        return f;
      }
    }
    for (DriftFinding f : scales) {
      if (!f.exits(kind, tested)) {
        return f;
      }
    }
    return atRecent;
  }

  /**
   * A short scale's finding of a pair, or null (the scale is not shorter than the recent decay, the pair was not
   * seen, or, when {@code screen}, it cannot enter).
   */
  private DriftFinding shortFinding(ShortScale scale, PairStats recent, PairStats reference, PairCounts referenceCounts,
      Factors factors, boolean screen) {
    if (!(scale.halfLifeMillis() < factors.recentHalfLife())) {
      return null;
    }
    PairCounts counts = scale.counts(recent);
    if (counts == null) {
      return null;
    }
    double factor = DriftStatistics.effectiveCountFactor(scale.halfLifeMillis(),
        Math.min(factors.age(), scale.ageMillis(recent)));
    if (screen && !DriftFinding.mayEnter(counts, referenceCounts, factor, factors.reference(), tested)) {
      return null;
    }
    return DriftFinding.of(recent, counts, scale.halfLifeMillis(), reference, referenceCounts, factor,
        factors.reference(), tested);
  }

  /**
   * How the two periods are read at one table version: each period's effective-count factor
   * ({@link DriftStatistics#effectiveCountFactor}, from the stream's age as this monitor saw it, which errs low
   * after a restart: fewer alerts, never more), and whether the recent decay is taken out of the reference
   * ({@link DriftStatistics#excluding}: when both are decays and the reference is the longer).
   */
  private record Factors(double recent, double reference, boolean excludeRecent, String referenceHorizon,
      long recentHalfLife, long age) {}

  /**
   * The reference horizon of {@code table}: the configured one, or, in a table that does not hold it (one not
   * refreshed from an engine, which always holds its tracking decay), the longest window.
   */
  private String referenceHorizon(FlooredTable table) {
    String configured = settings.referenceHorizon();
    return table.hasHorizon(configured) ? configured : table.evidenceHorizon().orElse(configured);
  }

  private Factors factors(FlooredTable table) {
    long watermark = table.table().watermarkMillis();
    long age = firstWatermarkMillis == Long.MIN_VALUE || watermark == Long.MIN_VALUE ? 0 : watermark - firstWatermarkMillis;
    long recentHalfLife = table.halfLifeMillis(settings.recentHorizon());
    String referenceHorizon = referenceHorizon(table);
    long referenceHalfLife = table.halfLifeMillis(referenceHorizon);
    boolean exclude = recentHalfLife > 0 && referenceHalfLife > recentHalfLife;
    double reference = exclude ? DriftStatistics.effectiveCountFactor(referenceHalfLife, recentHalfLife, age)
        : DriftStatistics.effectiveCountFactor(referenceHalfLife, age);
    return new Factors(DriftStatistics.effectiveCountFactor(recentHalfLife, age), reference, exclude, referenceHorizon,
        recentHalfLife, age);
  }

  /** The reference period's counts of a pair, with the recent decay taken out where {@code factors} say so. */
  private static PairCounts referenceCounts(PairStats recent, PairStats reference, Factors factors) {
    return referenceCounts(recent.counts(), recent.itemA(), reference.counts(), reference.itemA(), factors);
  }

  private static PairCounts referenceCounts(PairCounts recent, String recentItemA, PairCounts reference,
      String referenceItemA, Factors factors) {
    if (!factors.excludeRecent()) {
      return reference;
    }
    PairCounts shorter = recent;
    if (!recentItemA.equals(referenceItemA)) { // the same pair listed the other way round
      shorter = new PairCounts(shorter.baskets(), shorter.countB(), shorter.countA(), shorter.countAB());
    }
    return DriftStatistics.excluding(reference, shorter);
  }

  /** Observes one table version at {@code nowMillis}; returns the alert events it caused. */
  public synchronized List<AlertEvent> observe(FlooredTable table, long nowMillis) {
    List<DriftFinding> entering = new ArrayList<>();
    if (firstWatermarkMillis == Long.MIN_VALUE && table.table().watermarkMillis() != Long.MIN_VALUE) {
      firstWatermarkMillis = table.table().watermarkMillis();
    }
    for (ShortScale scale : shortScales) {
      scale.advance(table.table());
    }
    int compared = 0;
    Factors factors = factors(table);
    HorizonTable recentRows = table.table().horizon(settings.recentHorizon()).orElse(null);
    HorizonTable referenceRows = table.table().horizon(factors.referenceHorizon()).orElse(null);
    List<Candidate> candidates = new ArrayList<>();
    int rowCount = recentRows == null || referenceRows == null ? 0 : recentRows.rowCount();
    for (int row = 0; row < rowCount; row++) {
      // counts first: the floor and the screens read no measures, so only a pair that may enter computes them
      if (!table.publishes(settings.recentHorizon(), row) || !table.publishes(factors.referenceHorizon(), row)) {
        continue;
      }
      compared++;
      PairCounts recentCounts = rowCounts(recentRows, row);
      PairCounts screenReference = referenceCounts(recentCounts, recentRows.itemA(row),
          rowCounts(referenceRows, row), referenceRows.itemA(row), factors);
      boolean atRecent = DriftFinding.mayEnter(recentCounts, screenReference, factors.recent(), factors.reference(),
          tested);
      List<ShortScale> atShort = null;
      for (ShortScale scale : shortScales) {
        if (shortMayEnter(scale, row, recentRows.itemA(row), screenReference, factors)) {
          atShort = atShort == null ? new ArrayList<>() : atShort;
          atShort.add(scale);
        }
      }
      if (atRecent || atShort != null) {
        candidates.add(new Candidate(row, atRecent, atShort == null ? List.of() : atShort));
      }
    }
    // in the table's order of the recent horizon, as a pass over its sorted pairs would meet them
    candidates.sort((x, y) -> recentRows.compareRows(x.row(), y.row()));
    for (Candidate candidate : candidates) {
      PairStats recent = recentRows.row(candidate.row());
      PairStats reference = referenceRows.row(candidate.row());
      PairCounts counts = referenceCounts(recent, reference, factors);
      if (candidate.atRecent()) {
        addIfEntering(entering, DriftFinding.of(recent, recent.counts(), factors.recentHalfLife(), reference,
            counts, factors.recent(), factors.reference(), tested));
      }
      for (ShortScale scale : candidate.atShort()) {
        DriftFinding atShort = shortFinding(scale, recent, reference, counts, factors, true);
        if (atShort != null) {
          addIfEntering(entering, atShort);
        }
      }
    }
    List<AlertEvent> events = machine.step(nowMillis, table.version(), entering,
        (pair, kind) -> finding(table, pair, factors, kind));
    report = buildReport(table.version(), nowMillis, compared);
    return events;
  }

  /** A row screened in: whether the recent scale may enter, and which short scales may. */
  private record Candidate(int row, boolean atRecent, List<ShortScale> atShort) {}

  /** A row's counts in a horizon (without the size-adjusted E, which no screen reads). */
  private static PairCounts rowCounts(HorizonTable horizon, int row) {
    return new PairCounts(horizon.baskets(), horizon.countA(row), horizon.countB(row), horizon.countAB(row));
  }

  /** {@link #shortFinding}'s screen on a row's counts: whether the short scale's finding may enter. */
  private boolean shortMayEnter(ShortScale scale, int row, String itemA, PairCounts referenceCounts, Factors factors) {
    if (!(scale.halfLifeMillis() < factors.recentHalfLife())) {
      return false;
    }
    PairCounts counts = scale.countsOfRow(row, itemA);
    if (counts == null) {
      return false;
    }
    double factor = DriftStatistics.effectiveCountFactor(scale.halfLifeMillis(),
        Math.min(factors.age(), scale.ageOfRow(row)));
    return DriftFinding.mayEnter(counts, referenceCounts, factor, factors.reference(), tested);
  }

  private void addIfEntering(List<DriftFinding> entering, DriftFinding finding) {
    for (AlertKind kind : AlertKind.values()) {
      if (finding.enters(kind, tested)) {
        entering.add(finding);
        return;
      }
    }
  }

  private DriftReport buildReport(long version, long nowMillis, int compared) {
    Map<AlertKind, List<DriftEntry>> byKind = new EnumMap<>(AlertKind.class);
    for (AlertKind kind : AlertKind.values()) {
      List<DriftEntry> entries = new ArrayList<>();
      for (Map.Entry<PairKey, AlertMachine.Track> entry : machine.tracks(kind)) {
        AlertMachine.Track track = entry.getValue();
        if (track.last() == null
            || (track.state() == AlertMachine.State.COOLDOWN && !track.last().enters(kind, tested))) {
          continue; // cooling down and no longer drifting: nothing to report
        }
        Long raised = track.raisedAtMillis() == Long.MIN_VALUE ? null : track.raisedAtMillis();
        DriftChange change = track.last().changeFor(kind, tested);
        entries.add(new DriftEntry(kind, track.state(), track.sinceMillis(), raised, track.last(), change,
            DriftWords.summary(kind, change, track.last())));
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
