package org.pairpulse.serve.drift;

import java.util.HashMap;
import java.util.Map;
import java.util.Objects;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The short scale of drift detection: a decay with a half-life shorter than the table's recent decay, derived by
 * the monitor from successive table versions, so that the first hours of a change are tested at a scale that sees
 * them (a pair that stops selling at 20:00 has barely moved a 6-hour decay by midnight) without another horizon on
 * the engine's hot path.
 *
 * <h2>Derivation</h2>
 * A decay of half-life h read at t and at an earlier version t′ = t − Δ satisfies R(t) = R(t′)·2^(−Δ/h) + I, where
 * I is the weight of what arrived in (t′, t] (each basket weighted by its age at t). So I = R(t) − R(t′)·2^(−Δ/h),
 * per pair for n_ab, n_a and n_b, and per table for N; the short decay of half-life s follows as
 * S(t) = S(t′)·2^(−Δ/s) + I. A tracked pair's decayed counts grow exactly (only its admission estimate carries
 * sketch error, and that is the same in both versions), so I is exact for n_ab; its items' counts are exact where
 * the items are tracked. I weighs an arrival by 2^(−age/h) where the short decay would weigh it 2^(−age/s); for
 * arrivals spread evenly over the interval the two masses differ by the factor ∫₀^Δ 2^(−u/s) du / ∫₀^Δ 2^(−u/h) du,
 * by which I is multiplied (0.93 for a 15-minute refresh, h = 6 h and s = 1 h; 1.00 for a serving refresh of
 * seconds); an uneven interval leaves at most the factor 2^(−Δ/s) between the two weightings of one arrival.
 *
 * <h2>Start</h2>
 * A pair's short counts start at 0 when the monitor first sees it tracked (and again when it is admitted anew), so
 * they cover only the time since: {@link #ageMillis} is that time, and the tests read the counts with the effective
 * count factor of a decay of that age ({@link DriftStatistics#effectiveCountFactor(long, long)}), which is weak
 * evidence while young: a restart makes alerts later, never more.
 *
 * <p>Memory: one small record per tracked pair (about 100 bytes); a pass is one hash lookup per tracked pair. Not
 * thread-safe: the monitor calls it from one thread.
 */
final class ShortScale {
  private final long halfLifeMillis;
  private final String recentHorizon;
  private final Map<PairKey, Cells> cells = new HashMap<>();
  /** The cells of the newest table's rows (null where the row's pair is not in the recent horizon). */
  private Cells[] byRow = new Cells[0];
  /** Passes made ({@link #advance}); a cell seen at the last one holds it. */
  private long passes;
  private long lastWatermarkMillis = Long.MIN_VALUE;
  private double lastRecentBaskets;

  /** One pair's state, oriented as its {@link PairKey} (a = first). */
  private static final class Cells {
    PairKey key;
    /** The pair as its row lists it at the last pass. */
    String itemA;
    String itemB;
    /** Whether {@link #itemA} is the key's first item ({@code itemA.compareTo(itemB) <= 0}). */
    boolean aFirst;
    long seenPass;
    long startMillis;
    long trackedSinceMillis;
    double recentA;
    double recentB;
    double recentAB;
    double baskets;
    double countA;
    double countB;
    double countAB;
  }

  ShortScale(long halfLifeMillis, String recentHorizon) {
    if (halfLifeMillis <= 0) {
      throw new IllegalArgumentException("the short scale's half-life must be > 0, got " + halfLifeMillis);
    }
    this.halfLifeMillis = halfLifeMillis;
    this.recentHorizon = Objects.requireNonNull(recentHorizon, "recentHorizon");
  }

  long halfLifeMillis() {
    return halfLifeMillis;
  }

  /**
   * Advances every tracked pair of {@code table} to its watermark. Pairs that left the table are forgotten; a table
   * that does not hold the recent horizon as a decay, or whose watermark did not advance, changes nothing. A pass
   * reads the rows' counts (no measures) and looks a pair up by name only when its row holds another pair than at
   * the last pass.
   */
  void advance(PairTable table) {
    HorizonTable recent = table.horizon(recentHorizon).orElse(null);
    long watermark = table.watermarkMillis();
    if (recent == null || recent.halfLifeMillis() <= 0 || watermark == Long.MIN_VALUE
        || (lastWatermarkMillis != Long.MIN_VALUE && watermark <= lastWatermarkMillis)) {
      return;
    }
    boolean first = lastWatermarkMillis == Long.MIN_VALUE;
    double recentKeep = first ? 0 : Math.pow(2.0, -(watermark - lastWatermarkMillis) / (double) recent.halfLifeMillis());
    double shortKeep = first ? 0 : Math.pow(2.0, -(watermark - lastWatermarkMillis) / (double) halfLifeMillis);
    double weighting = first ? 1 : mass(watermark - lastWatermarkMillis, halfLifeMillis)
        / mass(watermark - lastWatermarkMillis, recent.halfLifeMillis());
    double basketsIn = weighting * Math.max(0, recent.baskets() - lastRecentBaskets * recentKeep);
    int rows = recent.rowCount();
    Cells[] previous = byRow;
    Cells[] next = new Cells[rows];
    for (int row = 0; row < rows; row++) {
      if (!recent.present(row)) {
        continue;
      }
      String itemA = recent.itemA(row);
      String itemB = recent.itemB(row);
      long since = recent.trackedSinceMillis(row);
      Cells c = row < previous.length ? previous[row] : null;
      boolean sameRow = c != null && c.trackedSinceMillis == since && c.itemA.equals(itemA) && c.itemB.equals(itemB);
      if (!sameRow) {
        c = cells.get(PairKey.of(itemA, itemB)); // the pair may have moved to another row
      }
      // the row's orientation, compared once per pair and row (the names' bytes are scattered over the heap)
      boolean aFirst = sameRow ? c.aFirst : itemA.compareTo(itemB) <= 0;
      double a = (aFirst ? recent.countA(row) : recent.countB(row)).value();
      double b = (aFirst ? recent.countB(row) : recent.countA(row)).value();
      double ab = recent.countAB(row).value();
      if (c == null || c.trackedSinceMillis != since || first) {
        c = new Cells();
        c.key = PairKey.of(itemA, itemB);
        c.startMillis = watermark;
        c.trackedSinceMillis = since;
        cells.put(c.key, c);
      } else {
        c.baskets = c.baskets * shortKeep + basketsIn;
        c.countA = c.countA * shortKeep + weighting * Math.max(0, a - c.recentA * recentKeep);
        c.countB = c.countB * shortKeep + weighting * Math.max(0, b - c.recentB * recentKeep);
        c.countAB = c.countAB * shortKeep + weighting * Math.max(0, ab - c.recentAB * recentKeep);
      }
      c.recentA = a;
      c.recentB = b;
      c.recentAB = ab;
      c.itemA = itemA;
      c.itemB = itemB;
      c.aFirst = aFirst;
      next[row] = c;
    }
    passes++;
    for (Cells c : next) {
      if (c != null) {
        c.seenPass = passes;
      }
    }
    for (Cells c : previous) { // pairs that left the table: their counts start over if they come back
      if (c != null && c.seenPass != passes && cells.get(c.key) == c) {
        cells.remove(c.key);
      }
    }
    byRow = next;
    lastWatermarkMillis = watermark;
    lastRecentBaskets = recent.baskets();
  }

  /** ∫₀^Δ 2^(−u/h) du, in milliseconds. */
  private static double mass(long deltaMillis, long halfLifeMillis) {
    double rate = Math.log(2) / halfLifeMillis;
    return -Math.expm1(-rate * deltaMillis) / rate;
  }

  /**
   * The short decay's counts of {@code stats}' pair, oriented as {@code stats} (its itemA as a), or null when the
   * pair was not seen at the newest table.
   */
  PairCounts counts(PairStats stats) {
    PairKey key = PairKey.of(stats.itemA(), stats.itemB());
    Cells c = cells.get(key);
    if (c == null) {
      return null;
    }
    return oriented(c, stats.itemA().equals(key.first()));
  }

  /** Event time the short counts of {@code stats}' pair cover (0 when unknown). */
  long ageMillis(PairStats stats) {
    Cells c = cells.get(PairKey.of(stats.itemA(), stats.itemB()));
    return c == null || lastWatermarkMillis == Long.MIN_VALUE ? 0 : lastWatermarkMillis - c.startMillis;
  }

  /**
   * The short decay's counts of row {@code row} of the newest table advanced, oriented as the row ({@code itemA} its
   * first item), or null when the row was not seen.
   */
  PairCounts countsOfRow(int row, String itemA) {
    Cells c = row < byRow.length ? byRow[row] : null;
    return c == null ? null : oriented(c, itemA.equals(c.key.first()));
  }

  /** Event time the short counts of row {@code row} cover (0 when unknown). */
  long ageOfRow(int row) {
    Cells c = row < byRow.length ? byRow[row] : null;
    return c == null || lastWatermarkMillis == Long.MIN_VALUE ? 0 : lastWatermarkMillis - c.startMillis;
  }

  private static PairCounts oriented(Cells c, boolean aFirst) {
    double a = Math.min(c.countA, c.baskets);
    double b = Math.min(c.countB, c.baskets);
    double ab = Math.min(c.countAB, Math.min(a, b));
    return aFirst ? PairCounts.exact(c.baskets, a, b, ab) : PairCounts.exact(c.baskets, b, a, ab);
  }

  /** Pairs held (the memory). */
  int size() {
    return cells.size();
  }
}
