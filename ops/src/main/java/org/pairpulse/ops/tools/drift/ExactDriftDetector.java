package org.pairpulse.ops.tools.drift;

import com.carrotsearch.hppc.LongIntHashMap;
import com.carrotsearch.hppc.ObjectIntHashMap;
import com.carrotsearch.hppc.cursors.LongIntCursor;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Objects;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/**
 * The reference detector of issue 11: exact counts, no sketches, no knowledge of change times; the delay the evidence
 * allows for each planted change, at hourly resolution, under the same false-alarm budget as pairpulse.
 *
 * <h2>Counting</h2>
 * Two passes over the same baskets (an {@link Iterable} that starts over, e.g. a {@link DriftStream}). Pass 1 counts
 * every pair over the whole run (an hppc map); only pairs with at least {@link Settings#minPairCount()} occurrences
 * over the run are tested (default 20: fewer is no evidence of anything, and this bounds memory; the rare-pair trap's
 * handful of co-occurrences is below it by design). Pass 2 counts, per hour of event time, N, every item and every
 * tested pair exactly. A basket's distinct items count once, each unordered pair of them once (as the engine does).
 *
 * <h2>Testing</h2>
 * At every hour boundary T (after the first basket's hour), for every tested pair and every scale k in
 * {@link Settings#scalesHours()} (1, 2, 4, 8, 16, 32 h): the recent period is [T − k, T), the reference the
 * {@link Settings#referenceHours()} (7 days) before it, clipped to the run's start and needing at least
 * {@link Settings#minReferenceHours()} (24 h). Two tests ({@link PeriodTests}) must both pass the threshold and agree in
 * direction: (a) the pair's rate per basket, (b) the pair's odds ratio (margin-free association). Both up: an
 * {@code emerging} alarm; both down: {@code fading}. Test (b) only runs when (a) passes (it cannot change the outcome
 * otherwise).
 *
 * <h2>Threshold: Bonferroni</h2>
 * With P pairs tested, S scales and 24 test times a day, each test runs at level α = B / (P · S · 24), B =
 * {@link Settings#falseAlarmsPerDay()} (0.5, pairpulse's target): an alarm needs both tests significant, so under
 * "no change" its probability at one (pair, scale, time) is at most α, and the expected false alarms per simulated day
 * at most B (conservative: overlapping windows and scales are strongly dependent). The threshold is the χ²(1) quantile
 * at 1 − α (Commons Math).
 *
 * <h2>Cohort floor</h2>
 * With {@link Settings#cohortFloor()} set, a pair cannot alarm before it was bought together in that many baskets
 * (counted from the run's start): the delay a detector that obeys pairpulse's privacy rule cannot beat, whatever its
 * statistics. Without it (the default), the delay the evidence alone allows.
 *
 * <h2>Alarms</h2>
 * An alarm of a pair and direction is raised at the first boundary where some scale signals it after a boundary where
 * none did (an episode raises once), as an {@link AlertEvent} (segment {@value #SEGMENT}, transition RAISED, no
 * evidence), so that {@link DriftScore} scores it exactly like pairpulse's alerts.
 *
 * <p>Memory: about (items + 4·P)·hours ints, e.g. 60,000 pairs over 7 days is 40 MB; pass 1's map holds every distinct
 * pair of the run.
 */
public final class ExactDriftDetector {
  public static final String SEGMENT = "exact";
  static final long HOUR_MILLIS = Duration.ofHours(1).toMillis();

  /**
   * @param minPairCount pairs with fewer occurrences over the run are not tested
   * @param scalesHours the recent periods' lengths in hours
   * @param referenceHours the reference period's length before the recent period
   * @param minReferenceHours no test while the reference period is shorter
   * @param falseAlarmsPerDay the Bonferroni budget B of expected false alarms per simulated day
   * @param cohortFloor no alarm on a pair before it was bought together in this many baskets since the run began
   *     (0: none): the privacy rule pairpulse's published statistics and alerts obey (serve's cohort floor, whose
   *     evidence window, 28 days by default, holds a whole run of the family)
   */
  public record Settings(int minPairCount, List<Integer> scalesHours, int referenceHours, int minReferenceHours,
      double falseAlarmsPerDay, int cohortFloor) {
    public Settings {
      scalesHours = List.copyOf(scalesHours);
      if (minPairCount < 1 || scalesHours.isEmpty() || referenceHours < 1 || minReferenceHours < 1
          || minReferenceHours > referenceHours || !(falseAlarmsPerDay > 0) || cohortFloor < 0) {
        throw new IllegalArgumentException("invalid reference detector settings");
      }
      for (int scale : scalesHours) {
        if (scale < 1) {
          throw new IllegalArgumentException("scales must be >= 1 h");
        }
      }
    }

    /**
     * 20 occurrences, scales 1–32 h, 7 days of reference (at least 24 h), 0.5 false alarms per simulated day, no
     * cohort floor.
     */
    public static Settings defaults() {
      return new Settings(20, List.of(1, 2, 4, 8, 16, 32), 7 * 24, 24, 0.5, 0);
    }

    /** These settings with an alarm held back until the pair reaches {@code baskets} co-occurrences. */
    public Settings withCohortFloor(int baskets) {
      return new Settings(minPairCount, scalesHours, referenceHours, minReferenceHours, falseAlarmsPerDay, baskets);
    }
  }

  /**
   * One alarm (the raise of an episode).
   *
   * @param pair the pair
   * @param kind emerging or fading
   * @param atMillis the hour boundary
   * @param scaleHours the shortest scale that signalled it
   * @param rateG2 test (a)'s statistic at that scale
   * @param associationG2 test (b)'s statistic at that scale
   */
  public record Alarm(PairKey pair, AlertKind kind, long atMillis, int scaleHours, double rateG2, double associationG2) {
    /** The alarm as a raised alert, for {@link DriftScore}. */
    public AlertEvent toAlert() {
      return AlertEvent.of(kind, AlertTransition.RAISED, SEGMENT, pair, atMillis, atMillis, 0, null);
    }
  }

  /**
   * What a run found.
   *
   * @param alarms every alarm, in time order
   * @param baskets the baskets counted
   * @param firstEventMillis the first basket's time
   * @param lastEventMillis the last basket's time
   * @param pairsTested P, the pairs with at least the minimum count
   * @param testLevel α per test
   * @param thresholdG2 the χ²(1) quantile at 1 − α both tests must exceed
   */
  public record Result(List<Alarm> alarms, long baskets, long firstEventMillis, long lastEventMillis, int pairsTested,
      double testLevel, double thresholdG2) {
    /** The alarms as raised alerts. */
    public List<AlertEvent> alerts() {
      return alarms.stream().map(Alarm::toAlert).toList();
    }
  }

  private final Settings settings;

  public ExactDriftDetector(Settings settings) {
    this.settings = Objects.requireNonNull(settings, "settings");
  }

  /** Counts {@code baskets} twice (they must come out the same both times, in event-time order) and tests. */
  public Result run(Iterable<ReplayBasket> baskets) {
    // pass 1: item ids, pair totals, the time span
    ObjectIntHashMap<String> itemIds = new ObjectIntHashMap<>();
    List<String> itemNames = new ArrayList<>();
    LongIntHashMap pairTotals = new LongIntHashMap();
    int[] ids = new int[16];
    long first = Long.MAX_VALUE;
    long last = Long.MIN_VALUE;
    long count = 0;
    for (ReplayBasket basket : baskets) {
      int n = distinctIds(basket, itemIds, itemNames, ids = grow(ids, basket.items().size()));
      for (int i = 0; i < n; i++) {
        for (int j = i + 1; j < n; j++) {
          pairTotals.addTo(pairKey(ids[i], ids[j]), 1);
        }
      }
      first = Math.min(first, basket.eventMillis());
      last = Math.max(last, basket.eventMillis());
      count++;
    }
    if (count == 0) {
      return new Result(List.of(), 0, 0, 0, 0, Double.NaN, Double.NaN);
    }
    LongIntHashMap rows = new LongIntHashMap();
    List<Long> rowKeys = new ArrayList<>();
    for (LongIntCursor cursor : pairTotals) {
      if (cursor.value >= settings.minPairCount()) {
        rowKeys.add(cursor.key);
      }
    }
    rowKeys.sort(null); // a deterministic row order
    for (int row = 0; row < rowKeys.size(); row++) {
      rows.put(rowKeys.get(row), row);
    }
    pairTotals.release();
    // pass 2: per-hour counts, then prefix sums (cumulative[h] = count over hours [0, h))
    long firstHour = Math.floorDiv(first, HOUR_MILLIS);
    int hours = (int) (Math.floorDiv(last, HOUR_MILLIS) - firstHour + 1);
    int stride = hours + 1;
    int pairs = rowKeys.size();
    int items = itemNames.size();
    int[] basketsCum = new int[stride];
    int[] itemCum = new int[items * stride];
    int[] pairCum = new int[pairs * stride];
    for (ReplayBasket basket : baskets) {
      int n = distinctIds(basket, itemIds, itemNames, ids = grow(ids, basket.items().size()));
      int h = (int) (Math.floorDiv(basket.eventMillis(), HOUR_MILLIS) - firstHour) + 1;
      basketsCum[h]++;
      for (int i = 0; i < n; i++) {
        itemCum[ids[i] * stride + h]++;
        for (int j = i + 1; j < n; j++) {
          int row = rows.getOrDefault(pairKey(ids[i], ids[j]), -1);
          if (row >= 0) {
            pairCum[row * stride + h]++;
          }
        }
      }
    }
    if (itemNames.size() != items) {
      throw new IllegalStateException("the second pass saw items the first did not: baskets must repeat exactly");
    }
    accumulate(basketsCum, 0, stride);
    for (int item = 0; item < items; item++) {
      accumulate(itemCum, item * stride, stride);
    }
    for (int row = 0; row < pairs; row++) {
      accumulate(pairCum, row * stride, stride);
    }
    List<Integer> scales = settings.scalesHours();
    double level = settings.falseAlarmsPerDay() / ((double) Math.max(1, pairs) * scales.size() * 24);
    double threshold = new ChiSquaredDistribution(1).inverseCumulativeProbability(1 - level);
    List<Alarm> alarms = new ArrayList<>();
    boolean[] active = new boolean[2 * pairs]; // [2 row] emerging, [2 row + 1] fading, at the previous boundary
    boolean[] now = new boolean[2 * pairs];
    Alarm[] firstSignal = new Alarm[2 * pairs];
    for (int boundary = 1; boundary <= hours; boundary++) {
      Arrays.fill(now, false);
      Arrays.fill(firstSignal, null);
      long atMillis = (firstHour + boundary) * HOUR_MILLIS;
      for (int scale : scales) {
        int recentFrom = boundary - scale;
        int referenceFrom = Math.max(0, recentFrom - settings.referenceHours());
        if (recentFrom - referenceFrom < settings.minReferenceHours()) {
          continue;
        }
        double recentBaskets = basketsCum[boundary] - basketsCum[recentFrom];
        double referenceBaskets = basketsCum[recentFrom] - basketsCum[referenceFrom];
        if (recentBaskets == 0 || referenceBaskets == 0) {
          continue;
        }
        for (int row = 0; row < pairs; row++) {
          int base = row * stride;
          if (pairCum[base + boundary] < settings.cohortFloor()) {
            continue; // under the cohort floor: nothing may be said about the pair yet
          }
          long x = pairCum[base + boundary] - pairCum[base + recentFrom];
          long y = pairCum[base + recentFrom] - pairCum[base + referenceFrom];
          double rate = PeriodTests.rateG2(x, recentBaskets, y, referenceBaskets);
          if (rate <= threshold) {
            continue;
          }
          long key = rowKeys.get(row);
          int a = (int) (key >>> 32) * stride;
          int b = (int) key * stride;
          double[] recent = PeriodTests.table(x, itemCum[a + boundary] - itemCum[a + recentFrom],
              itemCum[b + boundary] - itemCum[b + recentFrom], recentBaskets);
          double[] reference = PeriodTests.table(y, itemCum[a + recentFrom] - itemCum[a + referenceFrom],
              itemCum[b + recentFrom] - itemCum[b + referenceFrom], referenceBaskets);
          int direction = PeriodTests.rateDirection(x, recentBaskets, y, referenceBaskets);
          if (direction == 0 || PeriodTests.oddsRatioDirection(recent, reference) != direction) {
            continue;
          }
          double association = PeriodTests.homogeneityG2(recent, reference);
          if (association <= threshold) {
            continue;
          }
          int slot = 2 * row + (direction > 0 ? 0 : 1);
          now[slot] = true;
          if (firstSignal[slot] == null) {
            firstSignal[slot] = new Alarm(PairKey.of(itemNames.get((int) (key >>> 32)), itemNames.get((int) key)),
                direction > 0 ? AlertKind.EMERGING : AlertKind.FADING, atMillis, scale, rate, association);
          }
        }
      }
      for (int slot = 0; slot < now.length; slot++) {
        if (now[slot] && !active[slot]) {
          alarms.add(firstSignal[slot]);
        }
      }
      boolean[] swap = active;
      active = now;
      now = swap;
    }
    return new Result(List.copyOf(alarms), count, first, last, pairs, level, threshold);
  }

  private static int[] grow(int[] ids, int size) {
    return ids.length >= size ? ids : new int[Math.max(size, 2 * ids.length)];
  }

  /** The basket's distinct item ids into {@code out}; returns how many. */
  private static int distinctIds(ReplayBasket basket, ObjectIntHashMap<String> itemIds, List<String> names, int[] out) {
    int n = 0;
    for (String item : basket.items()) {
      int id = itemIds.getOrDefault(item, -1);
      if (id < 0) {
        id = names.size();
        itemIds.put(item, id);
        names.add(item);
      }
      boolean seen = false;
      for (int i = 0; i < n && !seen; i++) {
        seen = out[i] == id;
      }
      if (!seen) {
        out[n++] = id;
      }
    }
    return n;
  }

  private static long pairKey(int a, int b) {
    int low = Math.min(a, b);
    int high = Math.max(a, b);
    return ((long) low << 32) | high;
  }

  private static void accumulate(int[] values, int from, int length) {
    for (int i = from + 1; i < from + length; i++) {
      values[i] += values[i - 1];
    }
  }
}
