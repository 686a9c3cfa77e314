package org.pairpulse.ops.tools.bench;

import com.carrotsearch.hppc.LongDoubleHashMap;
import com.carrotsearch.hppc.cursors.LongDoubleCursor;
import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.EnumMap;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.pairpulse.ops.tools.bench.AccuracyStream.Kind;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.EngineStats;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;

/**
 * The accuracy phase: one pass of an {@link AccuracyStream} into a {@link PairEngine} and, alongside, into
 * {@link ExactCounts}; then, per horizon, the exact top-k pairs by lift against the engine's.
 *
 * <h2>Measures</h2>
 * <ul>
 *   <li>Support floor: only pairs with support n_ab/N at or above {@code floor} compete (exact support for
 *       the exact list; for the engine's list the lower bound of n_ab / N, so that only pairs whose evidence
 *       clears the floor compete — DESIGN: rank by evidence, never by raw point values of thin pairs). A floor such as 0.1% of
 *       the baskets is the common-practice rule of thumb of market-basket analysis: below it lifts rest on
 *       a handful of baskets and rank noise, not association.</li>
 *   <li>recall@k: the share of the exact top-k (by lift, ties by pair key) that is also in the engine's
 *       top-k by estimated lift among the pairs its refresh publishes ({@code PairTables.Options.of},
 *       then re-sorted by lift).</li>
 *   <li>lift relative error: |lift_est − lift_exact| / lift_exact over the exact top-k, lift_est from the
 *       published pair or, for a pair the engine does not track, from {@code pairCount}/{@code itemCount}
 *       (its sketches); p95 by nearest rank.</li>
 * </ul>
 * Lift here is the textbook lift N·n_ab/(n_a·n_b) on both sides ({@code liftUnadjusted}): the check measures what the
 * sketches and the tracked tables do to counts, which the exact side counts the same way. The size-adjusted lift
 * reads the same counts against a stratified expected count; its exact recomputation is checked in the sketch
 * module's tests (StratifiedExpectationTest).
 */
final class AccuracyCheck {
  private AccuracyCheck() {}

  /**
   * One horizon's comparison.
   *
   * @param exactAboveFloor pairs whose exact support reaches the floor
   * @param publishedAboveFloor published pairs whose estimated support reaches it
   * @param exactTop size of the exact top list (k, or fewer when fewer pairs reach the floor)
   * @param found how many of the exact top list are in the engine's top-k
   * @param recallFloorOnPointEstimate diagnostic: the recall if the engine's list applied the floor to the point estimate
   *     of n_ab instead of its point value
   * @param details lines describing misses, intruders and the kinds of the top pairs
   */
  record HorizonResult(String horizon, double baskets, double basketsEstimate, long distinctPairs, int exactAboveFloor,
      int publishedAboveFloor, int exactTop, int found, double recall, double liftRelErrP95, double liftRelErrMax,
      double recallFloorOnPointEstimate, List<String> details) {}

  /** Everything the phase measured. */
  record Report(long baskets, long pairOccurrences, long stateBytes, long exactBytes, Map<String, Long> exactBytesByHorizon,
      EngineStats stats, double engineSeconds, double exactSeconds, Map<String, HorizonResult> horizons) {}

  /** Runs the phase; progress lines go to {@code out}. */
  static Report run(AccuracyStream.Workload workload, EngineConfig config, double floor, int k, PrintWriter out) {
    AccuracyStream stream = new AccuracyStream(workload);
    String[] names = Catalog.names(workload.catalogItems());
    PairEngine engine = new PairEngine(config);
    ExactCounts exact = new ExactCounts(config.horizons());
    int[] ids = new int[AccuracyStream.MAX_ITEMS];
    long baskets = stream.basketCount();
    long reportEvery = Math.max(1, baskets / 4);
    long pairOccurrences = 0;
    long engineNanos = 0;
    long exactNanos = 0;
    long count = 0;
    while (stream.hasNext()) {
      int size = stream.next(ids);
      long eventMillis = stream.eventMillis();
      String[] basket = new String[size];
      for (int i = 0; i < size; i++) {
        basket[i] = names[ids[i]];
      }
      long t0 = System.nanoTime();
      engine.addBasket(eventMillis, basket);
      long t1 = System.nanoTime();
      exact.addBasket(eventMillis, ids, size);
      long t2 = System.nanoTime();
      engineNanos += t1 - t0;
      exactNanos += t2 - t1;
      pairOccurrences += (long) size * (size - 1) / 2;
      if (++count % reportEvery == 0 && count < baskets) {
        out.printf(Locale.ROOT, "  accuracy: fed %,d/%,d baskets (%,d pair occurrences), engine %.1f s, exact %.1f s%n",
            count, baskets, pairOccurrences, engineNanos / 1e9, exactNanos / 1e9);
        out.flush();
      }
    }
    out.printf(Locale.ROOT, "  accuracy: fed %,d baskets, %,d pair occurrences; engine %.1f s (%,.0f pairs/s single pass), exact %.1f s%n",
        count, pairOccurrences, engineNanos / 1e9, pairOccurrences / (engineNanos / 1e9), exactNanos / 1e9);

    PairTable table = engine.refresh(PairTables.Options.of(1, 0));
    Map<String, HorizonResult> results = new LinkedHashMap<>();
    Map<String, Long> exactBytesByHorizon = new LinkedHashMap<>();
    for (HorizonSpec spec : config.horizons()) {
      results.put(spec.name(), evaluate(spec.name(), engine, table, exact, stream, names, floor, k));
      exactBytesByHorizon.put(spec.name(), exact.stateBytes(spec.name()));
    }
    return new Report(count, pairOccurrences, engine.stateBytes(), exact.stateBytes(), exactBytesByHorizon, engine.stats(),
        engineNanos / 1e9, exactNanos / 1e9, results);
  }

  /** A pair with its exact counts and lift. */
  private record Ranked(long key, double countAB, double lift) {}

  static HorizonResult evaluate(String horizon, PairEngine engine, PairTable table, ExactCounts exact, AccuracyStream stream,
      String[] names, double floor, int k) {
    double baskets = exact.baskets(horizon);
    LongDoubleHashMap items = exact.itemCounts(horizon);
    LongDoubleHashMap pairs = exact.pairCounts(horizon);
    double floorCount = floor * baskets;

    List<Ranked> exactAbove = new ArrayList<>();
    for (LongDoubleCursor pair : pairs) {
      if (pair.value >= floorCount && pair.value > 0) {
        double countA = items.get(ExactCounts.lowItem(pair.key));
        double countB = items.get(ExactCounts.highItem(pair.key));
        exactAbove.add(new Ranked(pair.key, pair.value, baskets * pair.value / (countA * countB)));
      }
    }
    exactAbove.sort(Comparator.comparingDouble(Ranked::lift).reversed().thenComparingLong(Ranked::key));
    List<Ranked> exactTop = exactAbove.subList(0, Math.min(k, exactAbove.size()));
    if (exactTop.isEmpty()) {
      throw new IllegalStateException(String.format(Locale.ROOT,
          "no pair of horizon '%s' reaches the support floor %.4g (%.1f of %.0f baskets): lower --support-floor or feed"
              + " more pair occurrences", horizon, floor, floorCount, baskets));
    }

    Map<Long, PairStats> published = new HashMap<>();
    List<PairStats> engineAbove = new ArrayList<>();
    for (PairStats stats : table.pairs(horizon)) {
      long key = ExactCounts.pairKey(Catalog.idOf(stats.itemA()), Catalog.idOf(stats.itemB()));
      published.put(key, stats);
      if (stats.counts().countAB().lower() >= floor * stats.counts().baskets()) { // evidence, not the point value
        engineAbove.add(stats);
      }
    }
    engineAbove.sort(Comparator.comparingDouble((PairStats p) -> sortableLift(p.measures().liftUnadjusted())).reversed()
        .thenComparing(PairStats::itemA).thenComparing(PairStats::itemB));
    Map<Long, Integer> engineRank = new HashMap<>();
    for (int r = 0; r < engineAbove.size(); r++) {
      PairStats stats = engineAbove.get(r);
      engineRank.put(ExactCounts.pairKey(Catalog.idOf(stats.itemA()), Catalog.idOf(stats.itemB())), r);
    }
    Set<Long> engineTop = new HashSet<>();
    for (int r = 0; r < Math.min(k, engineAbove.size()); r++) {
      PairStats stats = engineAbove.get(r);
      engineTop.add(ExactCounts.pairKey(Catalog.idOf(stats.itemA()), Catalog.idOf(stats.itemB())));
    }
    double kthEngineLift = engineAbove.size() >= k ? engineAbove.get(k - 1).measures().liftUnadjusted() : Double.NaN;
    // diagnostic only (not in RESULT): the list with the floor applied to the point estimate of support
    List<PairStats> byPoint = new ArrayList<>();
    for (PairStats stats : table.pairs(horizon)) {
      if (stats.measures().support() >= floor) {
        byPoint.add(stats);
      }
    }
    byPoint.sort(Comparator.comparingDouble((PairStats p) -> sortableLift(p.measures().liftUnadjusted())).reversed()
        .thenComparing(PairStats::itemA).thenComparing(PairStats::itemB));
    Set<Long> engineTopByPoint = new HashSet<>();
    for (PairStats stats : byPoint.subList(0, Math.min(k, byPoint.size()))) {
      engineTopByPoint.add(ExactCounts.pairKey(Catalog.idOf(stats.itemA()), Catalog.idOf(stats.itemB())));
    }

    int found = 0;
    int foundByPoint = 0;
    double[] relErrors = new double[exactTop.size()];
    List<String> misses = new ArrayList<>();
    Map<Kind, int[]> byKind = new EnumMap<>(Kind.class); // {in exact top, found}
    Set<Long> exactTopKeys = new HashSet<>();
    for (int r = 0; r < exactTop.size(); r++) {
      Ranked pair = exactTop.get(r);
      exactTopKeys.add(pair.key);
      int a = ExactCounts.lowItem(pair.key);
      int b = ExactCounts.highItem(pair.key);
      PairStats stats = published.get(pair.key);
      double estimate = stats != null ? stats.measures().liftUnadjusted() : sketchLift(engine, horizon, names[a], names[b]);
      relErrors[r] = Math.abs(estimate - pair.lift) / pair.lift;
      Kind kind = stream.kindOf(a, b);
      int[] tally = byKind.computeIfAbsent(kind, x -> new int[2]);
      tally[0]++;
      if (engineTopByPoint.contains(pair.key)) {
        foundByPoint++;
      }
      if (engineTop.contains(pair.key)) {
        found++;
        tally[1]++;
        continue;
      }
      String why;
      if (stats == null) {
        why = String.format(Locale.ROOT, "not tracked (sketch lift %.2f)", estimate);
      } else if (!engineRank.containsKey(pair.key)) {
        why = String.format(Locale.ROOT, "support lower bound %.5f below the floor (lift %.2f, n_ab %.1f [%.1f, %.1f])",
            stats.counts().countAB().lower() / stats.counts().baskets(), estimate, stats.counts().countAB().value(), stats.counts().countAB().lower(),
            stats.counts().countAB().upper());
      } else {
        why = String.format(Locale.ROOT, "est. lift %.2f ranks #%d (engine #%d lift %.2f; n_ab %.1f [%.1f, %.1f])", estimate,
            engineRank.get(pair.key) + 1, k, kthEngineLift, stats.counts().countAB().value(),
            stats.counts().countAB().lower(), stats.counts().countAB().upper());
      }
      misses.add(String.format(Locale.ROOT, "miss %s-%s %s: exact #%d lift %.2f n_ab %.1f support %.5f; %s", names[a], names[b],
          kind.label(), r + 1, pair.lift, pair.countAB, pair.countAB / baskets, why));
    }
    double[] sorted = relErrors.clone();
    Arrays.sort(sorted);
    double p95 = sorted[(int) Math.ceil(0.95 * sorted.length) - 1];
    double max = sorted[sorted.length - 1];

    List<String> details = new ArrayList<>();
    StringBuilder kinds = new StringBuilder("exact top by kind (found/in top):");
    for (Map.Entry<Kind, int[]> entry : byKind.entrySet()) {
      kinds.append(' ').append(entry.getKey().label()).append(' ').append(entry.getValue()[1]).append('/').append(entry.getValue()[0]);
    }
    details.add(kinds.toString());
    details.addAll(misses);
    Map<Long, Integer> exactRank = new HashMap<>();
    for (int r = 0; r < exactAbove.size(); r++) {
      exactRank.put(exactAbove.get(r).key, r);
    }
    for (int r = 0; r < Math.min(k, engineAbove.size()); r++) {
      PairStats stats = engineAbove.get(r);
      long key = ExactCounts.pairKey(Catalog.idOf(stats.itemA()), Catalog.idOf(stats.itemB()));
      if (!exactTopKeys.contains(key)) {
        Integer rank = exactRank.get(key);
        int a = ExactCounts.lowItem(key);
        int b = ExactCounts.highItem(key);
        double exactAB = pairs.get(key);
        double exactLift = baskets * exactAB / (items.get(a) * items.get(b));
        details.add(String.format(Locale.ROOT, "intruder %s-%s %s: engine #%d lift %.2f n_ab %.1f [%.1f, %.1f] support %.5f;"
                + " exact %s lift %.2f n_ab %.1f support %.5f", names[a], names[b], stream.kindOf(a, b).label(), r + 1,
            stats.measures().liftUnadjusted(), stats.counts().countAB().value(), stats.counts().countAB().lower(),
            stats.counts().countAB().upper(), stats.measures().support(),
            rank == null ? "below the floor," : String.format(Locale.ROOT, "#%d", rank + 1), exactLift, exactAB, exactAB / baskets));
      }
    }
    return new HorizonResult(horizon, baskets, engine.basketCount(horizon), pairs.size(), exactAbove.size(), engineAbove.size(),
        exactTop.size(), found, (double) found / exactTop.size(), p95, max, (double) foundByPoint / exactTop.size(),
        details);
  }

  private static double sortableLift(double lift) {
    return Double.isNaN(lift) ? Double.NEGATIVE_INFINITY : lift;
  }

  /** The engine's lift for an untracked pair, from its counts (sketches for the pair). */
  private static double sketchLift(PairEngine engine, String horizon, String a, String b) {
    PairCounts counts = new PairCounts(engine.basketCount(horizon), engine.itemCount(a, horizon), engine.itemCount(b, horizon),
        engine.pairCount(a, b, horizon));
    return PairMeasures.of(counts).liftUnadjusted();
  }
}
