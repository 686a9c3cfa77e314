package org.pairpulse.ops.analysis.report;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.DriftChange;
import org.pairpulse.serve.drift.DriftFinding;
import org.pairpulse.serve.drift.DriftWords;
import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.OfferScreen;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The offer shortlist: per segment, the top emerging pairs and the best suggestion pairs inside the confidence
 * band, each with its evidence, built from pair tables through serve's cohort floor.
 *
 * <h2>Lists</h2>
 * <ul>
 *   <li><b>emerging</b>: pairs published in both drift horizons whose comparison ({@link DriftFinding}) meets the
 *       entry condition of an emerging alert now, strongest signed √G² first. (No dwell: a report is one moment.)</li>
 *   <li><b>suggestion</b>: rules a ⇒ b of the pairs published in the report's horizon, in the table's order (shrunk
 *       lift, size-adjusted), whose confidence lies in the band, whose lift interval lies above 1 and whose pair passes
 *       the offer screen ({@link OfferScreen}: its size-adjusted association is significant after a
 *       Benjamini–Hochberg step over every published pair of the horizon); bundle pairs are left out. The list may be
 *       shorter than asked, never padded; each segment says how many pairs were screened and how many passed.</li>
 * </ul>
 *
 * <h2>Cohort floor</h2>
 * Every number comes from the floored view ({@link FlooredTable}). The same lists are also built on the unfloored
 * table, and the rows that only it has are counted per segment ({@link Segment#suppressedRows()}): the report says how
 * many rows the floor held back, never which or with what numbers. A segment whose N is under the floor shows no
 * rows at all.
 *
 * @param settings what was listed
 * @param asOfMillis event time the tables are as of (the newest watermark)
 * @param segments the segments, {@code all} first
 */
public record ShortlistReport(ShortlistSettings settings, long asOfMillis, List<Segment> segments) {

  /**
   * One segment's lists.
   *
   * @param name {@code all}, or {@code attribute=value}
   * @param baskets N in the report's horizon, NaN when under the floor
   * @param emerging the emerging rows, best first
   * @param suggestions the suggestion rows, best first
   * @param suppressedRows rows held back by the cohort floor (over both lists)
   * @param screenedPairs published pairs of the report's horizon tested by the offer screen
   * @param passedPairs pairs among them whose size-adjusted association passed it
   */
  public record Segment(String name, double baskets, List<ShortlistRow> emerging, List<ShortlistRow> suggestions,
      int suppressedRows, int screenedPairs, int passedPairs) {
    public Segment {
      emerging = List.copyOf(emerging);
      suggestions = List.copyOf(suggestions);
    }

    /** A segment without screen counts. */
    public Segment(String name, double baskets, List<ShortlistRow> emerging, List<ShortlistRow> suggestions,
        int suppressedRows) {
      this(name, baskets, emerging, suggestions, suppressedRows, 0, 0);
    }

    /** Whether the whole segment is under the floor. */
    public boolean suppressed() {
      return Double.isNaN(baskets);
    }
  }

  public ShortlistReport {
    segments = List.copyOf(segments);
  }

  /**
   * Builds the report.
   *
   * @param tables one pair table per segment, in report order
   * @param horizons the engine's horizons (which are windows: the floor needs them)
   */
  public static ShortlistReport build(Map<String, PairTable> tables, List<HorizonSpec> horizons, ShortlistSettings settings) {
    Objects.requireNonNull(settings, "settings");
    CohortFloor floor = new CohortFloor(settings.cohortFloor(), horizons);
    CohortFloor none = new CohortFloor(0, horizons);
    long asOf = Long.MIN_VALUE;
    List<Segment> segments = new ArrayList<>();
    for (Map.Entry<String, PairTable> entry : tables.entrySet()) {
      PairTable table = entry.getValue();
      if (!table.horizonNames().isEmpty() && !table.horizonNames().contains(settings.horizon())) {
        throw new IllegalArgumentException("horizon '" + settings.horizon() + "' is not in the table; horizons: "
            + table.horizonNames());
      }
      asOf = Math.max(asOf, table.watermarkMillis());
      FlooredTable floored = FlooredTable.of(table, floor);
      FlooredTable open = FlooredTable.of(table, none);
      DriftMonitor drift = new DriftMonitor(settings.drift(), entry.getKey());
      double baskets = floored.baskets(settings.horizon());
      List<ShortlistRow> emerging = Double.isNaN(baskets) ? List.of() : emerging(floored, drift, settings);
      List<ShortlistRow> suggestions = Double.isNaN(baskets) ? List.of() : suggestions(floored, drift, settings);
      int held = held(emerging, emerging(open, drift, settings)) + held(suggestions, suggestions(open, drift, settings));
      OfferScreen.Horizon screen = OfferScreen.of(floored).horizon(settings.horizon());
      segments.add(new Segment(entry.getKey(), baskets, emerging, suggestions, held, screen.screened(), screen.passed()));
    }
    return new ShortlistReport(settings, asOf, segments);
  }

  /** Rows of the unfloored list that the floored one lacks. */
  private static int held(List<ShortlistRow> shown, List<ShortlistRow> all) {
    Set<String> keys = new HashSet<>();
    for (ShortlistRow row : shown) {
      keys.add(row.itemA() + "\u0000" + row.itemB());
    }
    int held = 0;
    for (ShortlistRow row : all) {
      if (!keys.contains(row.itemA() + "\u0000" + row.itemB())) {
        held++;
      }
    }
    return held;
  }

  private static String change(DriftFinding finding, ShortlistSettings settings) {
    DriftChange change = finding.emergingChange(settings.drift());
    return change == null ? "" : change.wireName();
  }

  static List<ShortlistRow> emerging(FlooredTable table, DriftMonitor drift, ShortlistSettings settings) {
    String recent = settings.drift().recentHorizon();
    List<DriftFinding> findings = new ArrayList<>();
    Map<PairKey, PairStats> recentStats = new LinkedHashMap<>();
    for (PairStats stats : table.pairs(recent)) {
      PairKey key = PairKey.of(stats.itemA(), stats.itemB());
      Optional<DriftFinding> finding = drift.finding(table, key);
      if (finding.isPresent() && finding.get().enters(AlertKind.EMERGING, settings.drift())) {
        findings.add(finding.get());
        recentStats.put(key, stats);
      }
    }
    findings.sort(Comparator.comparingDouble((DriftFinding f) -> -f.signedRootG2())
        .thenComparing(f -> f.pair().first()).thenComparing(f -> f.pair().second()));
    List<ShortlistRow> rows = new ArrayList<>();
    for (DriftFinding finding : findings) {
      if (rows.size() == settings.top()) {
        break;
      }
      PairStats stats = recentStats.get(finding.pair());
      PairMeasures m = stats.measures();
      boolean forward = m.confidenceAB() >= m.confidenceBA();
      rows.add(new ShortlistRow(ShortlistRow.EMERGING, rows.size() + 1, forward ? stats.itemA() : stats.itemB(),
          forward ? stats.itemB() : stats.itemA(), recent, stats.counts().countAB().value(), m.support(),
          forward ? m.confidenceAB() : m.confidenceBA(), m.lift(), m.liftLower(), m.liftUpper(), finding.recentLift(),
          finding.baselineLift(), finding.signedRootG2(), change(finding, settings),
          DriftWords.summary(AlertKind.EMERGING, finding.emergingChange(settings.drift()), finding)));
    }
    return rows;
  }

  static List<ShortlistRow> suggestions(FlooredTable table, DriftMonitor drift, ShortlistSettings settings) {
    List<ShortlistRow> rows = new ArrayList<>();
    String recent = settings.drift().recentHorizon();
    String baseline = settings.drift().referenceHorizon();
    OfferScreen.Horizon screen = OfferScreen.of(table).horizon(settings.horizon());
    for (PairStats stats : table.pairs(settings.horizon())) {
      PairMeasures m = stats.measures();
      if (!screen.passes(stats) || m.isBundle() || m.isRepelling() || !(m.liftLower() > 1.0)) {
        continue; // a promotion needs an association: the lift interval must lie above independence
      }
      Optional<DriftFinding> finding = drift.finding(table, PairKey.of(stats.itemA(), stats.itemB()));
      double recentLift = table.pair(stats.itemA(), stats.itemB(), recent).map(p -> p.measures().lift()).orElse(Double.NaN);
      double baselineLift = table.pair(stats.itemA(), stats.itemB(), baseline).map(p -> p.measures().lift())
          .orElse(Double.NaN);
      double root = finding.map(DriftFinding::signedRootG2).orElse(Double.NaN);
      for (int direction = 0; direction < 2 && rows.size() < settings.top(); direction++) {
        boolean forward = direction == 0;
        double confidence = forward ? m.confidenceAB() : m.confidenceBA();
        if (confidence >= settings.minConfidence() && confidence <= settings.maxConfidence()) {
          rows.add(new ShortlistRow(ShortlistRow.SUGGESTION, rows.size() + 1, forward ? stats.itemA() : stats.itemB(),
              forward ? stats.itemB() : stats.itemA(), settings.horizon(), stats.counts().countAB().value(), m.support(),
              confidence, m.lift(), m.liftLower(), m.liftUpper(), recentLift, baselineLift, root, "", ""));
        }
      }
      if (rows.size() == settings.top()) {
        break;
      }
    }
    return rows;
  }
}
