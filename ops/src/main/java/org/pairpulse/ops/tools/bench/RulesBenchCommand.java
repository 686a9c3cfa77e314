package org.pairpulse.ops.tools.bench;

import java.io.PrintWriter;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.Callable;
import org.pairpulse.ops.analysis.report.ShortlistReport;
import org.pairpulse.ops.analysis.report.ShortlistRow;
import org.pairpulse.ops.analysis.report.ShortlistSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.suggest.Suggestion;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.fixtures.SizeShape;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.SizeClasses;
import org.pairpulse.sketch.table.PairTable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench rules}: rule quality against a planted truth. For each basket-size shape of
 * {@link RulesStream} (small, mixed, heavy tail; each with its own seed) it counts a stream of independent Zipf items
 * with planted pairs in the default engine (segment {@code all} and two channel segments), builds the report's offer
 * lists ({@link ShortlistReport}, default band and floor, every passing row), and scores:
 * <ul>
 *   <li>{@code precision_at_20}: planted rules among the first 20 rows of each run's {@code all} list (pooled);</li>
 *   <li>{@code planted_recall}: planted pairs whose exact count reaches the cohort floor that the {@code all} list
 *       holds (either direction);</li>
 *   <li>{@code spurious_share}: rows of any list and segment whose pair was not planted, over all rows;</li>
 *   <li>{@code hit_at_10}: held-out baskets (generated after the refresh, never counted) with one item hidden, the rest
 *       asked for 10 suggestions (posterior ranking, band off, size-adjusted shrunk lift); the hidden item in them.
 *       The same with the textbook shrunk lift ({@code shrunk_lift_unadjusted}) is printed beside it, and
 *       {@code hit_at_10_popular} is the 10 most frequent items not in the basket.</li>
 * </ul>
 * Prints progress and, last, one line:
 * <pre>
 * RESULT rules precision_at_20=&lt;x&gt; planted_recall=&lt;x&gt; spurious_share=&lt;x&gt; hit_at_10=&lt;x&gt;
 *     hit_at_10_popular=&lt;x&gt;
 * </pre>
 * Run: {@code ops/pairpulse bench rules}; about a minute here.
 */
@Command(name = "rules", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Counts seeded streams of independent items with planted pairs (three basket-size shapes: small, mixed, heavy"
            + " tail) and scores the offer lists and suggestions against the planted truth. Prints progress, then one"
            + " line:",
        "RESULT rules precision_at_20=<x> planted_recall=<x> spurious_share=<x> hit_at_10=<x> hit_at_10_popular=<x>"})
public final class RulesBenchCommand implements Callable<Integer> {
  static final long START_MILLIS = 1_780_000_000_000L - Math.floorMod(1_780_000_000_000L, 3_600_000L);
  /** The stream spans 20 hours: all of it inside the report's {@code day} window. */
  static final long SPAN_MILLIS = Duration.ofHours(20).toMillis();

  @Mixin
  BenchMixin bench;

  @Option(names = "--baskets", paramLabel = "N", description = "Baskets per shape (default: ${DEFAULT-VALUE}).")
  int baskets = 150_000;

  @Option(names = "--items", paramLabel = "N", description = "Catalogue size (default: ${DEFAULT-VALUE}).")
  int items = 2_000;

  @Option(names = "--planted", paramLabel = "N", description = "Planted pairs per shape (default: ${DEFAULT-VALUE}).")
  int planted = 20;

  @Option(names = "--test-baskets", paramLabel = "N", description = "Held-out baskets per shape for hit@10"
      + " (default: ${DEFAULT-VALUE}).")
  int testBaskets = 3_000;

  @Option(names = "--seed", paramLabel = "N", description = "Seed of the first shape; the others add 1, 2"
      + " (default: ${DEFAULT-VALUE}).")
  long seed = 15;

  @Option(names = "--shapes", split = ",", paramLabel = "SHAPE", converter = ShapeConverter.class,
      description = "Basket-size shapes (default: all): small, mixed, heavy-tail.")
  List<SizeShape> shapes = List.of(SizeShape.values());

  @Option(names = "--pair-ranking", paramLabel = "RANKING", description = "How pairs rank for tracking: fractional or"
      + " count (default: the engine's default).")
  String pairRanking;

  /** Reads a shape by the name the bench prints (heavy-tail), in any case. */
  static final class ShapeConverter implements picocli.CommandLine.ITypeConverter<SizeShape> {
    @Override
    public SizeShape convert(String value) {
      for (SizeShape shape : SizeShape.values()) {
        if (shape.wireName().equalsIgnoreCase(value.trim()) || shape.name().equalsIgnoreCase(value.trim())) {
          return shape;
        }
      }
      throw new picocli.CommandLine.TypeConversionException("not a shape: '" + value + "' (small, mixed, heavy-tail)");
    }
  }

  @Option(names = "--size-classes", paramLabel = "CLASSES", description = "Basket-size classes of the engine, e.g."
      + " 1,2,3,4-5,6+ (default: the engine's default).")
  String sizeClasses;

  @Option(names = "--tracked-pairs", paramLabel = "N", description = "Tracked-pair capacity of the engine (default:"
      + " the engine's default).")
  Integer trackedPairs;

  /** Pooled tallies over the shapes. */
  static final class Score {
    long topRows;
    long topPlanted;
    long rows;
    long spurious;
    long aboveFloor;
    long recalled;
    long trials;
    long hits;
    long hitsUnadjusted;
    long hitsPopular;

    static String ratio(long numerator, long denominator) {
      return denominator == 0 ? "NA" : String.format(Locale.ROOT, "%.4f", (double) numerator / denominator);
    }

    String resultLine() {
      return "RESULT rules precision_at_20=" + ratio(topPlanted, topRows) + " planted_recall=" + ratio(recalled, aboveFloor)
          + " spurious_share=" + ratio(spurious, rows) + " hit_at_10=" + ratio(hits, trials) + " hit_at_10_popular="
          + ratio(hitsPopular, trials);
    }
  }

  @Override
  public Integer call() {
    if (pairRanking != null) {
      try {
        org.pairpulse.sketch.engine.PairRanking.parse(pairRanking);
      } catch (IllegalArgumentException e) {
        throw bench.usage(e.getMessage());
      }
    }
    if (baskets < 1_000 || items < 200 || planted < 0 || testBaskets < 0) {
      throw bench.usage("need --baskets >= 1000, --items >= 200, --planted >= 0,"
          + " --test-baskets >= 0");
    }
    PrintWriter out = bench.out();
    long started = System.nanoTime();
    out.printf(Locale.ROOT, "bench rules: %,d baskets per shape over %d items (Zipf 1.0), %d planted pairs, shapes %s%n",
        baskets, items, planted, shapes.stream().map(SizeShape::wireName).toList());
    out.flush();
    Score total = new Score();
    for (int s = 0; s < shapes.size(); s++) {
      Score score = run(shapes.get(s), seed + s, out);
      add(total, score);
      out.printf(Locale.ROOT, "  %-10s precision@20 %s, planted recall %s (%d of %d above the floor), spurious share %s"
          + " (%d of %d rows), hit@10 %s (textbook model %s, popular %s); %.1f s%n", shapes.get(s).wireName(),
          Score.ratio(score.topPlanted, score.topRows), Score.ratio(score.recalled, score.aboveFloor), score.recalled,
          score.aboveFloor, Score.ratio(score.spurious, score.rows), score.spurious, score.rows,
          Score.ratio(score.hits, score.trials), Score.ratio(score.hitsUnadjusted, score.trials),
          Score.ratio(score.hitsPopular, score.trials), (System.nanoTime() - started) / 1e9);
      out.flush();
    }
    out.printf(Locale.ROOT, "  pooled: hit@10 %s with the size-adjusted model, %s with the textbook one (same baskets)%n",
        Score.ratio(total.hits, total.trials), Score.ratio(total.hitsUnadjusted, total.trials));
    out.println(total.resultLine());
    out.flush();
    return 0;
  }

  private static void add(Score into, Score s) {
    into.topRows += s.topRows;
    into.topPlanted += s.topPlanted;
    into.rows += s.rows;
    into.spurious += s.spurious;
    into.aboveFloor += s.aboveFloor;
    into.recalled += s.recalled;
    into.trials += s.trials;
    into.hits += s.hits;
    into.hitsUnadjusted += s.hitsUnadjusted;
    into.hitsPopular += s.hitsPopular;
  }

  /** One shape: count, report, score. */
  Score run(SizeShape shape, long runSeed, PrintWriter out) {
    RulesStream stream = new RulesStream(runSeed, items, 1.0, shape, planted);
    EngineConfig.Builder builder = EngineConfig.builder();
    if (sizeClasses != null) {
      builder.sizeClasses(SizeClasses.parse(sizeClasses));
    }
    if (trackedPairs != null) {
      builder.trackedPairCapacity(trackedPairs);
    }
    if (pairRanking != null) {
      builder.pairRanking(org.pairpulse.sketch.engine.PairRanking.parse(pairRanking));
    }
    EngineConfig config = builder.build();
    Map<String, PairEngine> engines = new LinkedHashMap<>();
    engines.put("all", new PairEngine(config));
    engines.put("channel=app", new PairEngine(config));
    engines.put("channel=web", new PairEngine(config));
    long pairs = 0;
    long itemTotal = 0;
    for (int i = 0; i < baskets; i++) {
      long t = START_MILLIS + SPAN_MILLIS * i / baskets;
      String[] basket = stream.basket().toArray(new String[0]);
      pairs += (long) basket.length * (basket.length - 1) / 2;
      itemTotal += basket.length;
      engines.get("all").addBasket(t, basket);
      engines.get(stream.nextDouble() < 0.6 ? "channel=app" : "channel=web").addBasket(t, basket);
    }
    long watermark = engines.get("all").watermarkMillis();
    Map<String, PairTable> tables = new LinkedHashMap<>();
    engines.forEach((name, engine) -> {
      engine.advanceTo(watermark);
      tables.put(name, engine.refresh(PairTables.Options.of(1, watermark)));
    });
    out.printf(Locale.ROOT, "  %-10s %,d baskets counted (%,d pairs, mean %.1f items), %,d pairs tracked%n",
        shape.wireName(), baskets, pairs, (double) itemTotal / baskets,
        tables.get("all").pairCount());
    out.flush();

    out.printf(Locale.ROOT, "  %-10s null model on the 20 most popular items (independent): median lift %s size-adjusted,"
        + " %s textbook%n", shape.wireName(), popularPairsLift(tables.get("all"), true),
        popularPairsLift(tables.get("all"), false));
    ShortlistSettings settings = ShortlistSettings.defaults().withTop(10_000);
    ShortlistReport report = ShortlistReport.build(tables, config.horizons(), settings);
    Set<String> plantedKeys = new HashSet<>();
    stream.planted().forEach(p -> plantedKeys.add(p.key()));
    Score score = new Score();
    Set<String> listedInAll = new HashSet<>();
    for (ShortlistReport.Segment segment : report.segments()) {
      for (ShortlistRow row : segment.suggestions()) {
        String key = RulesStream.pairKey(row.itemA(), row.itemB());
        boolean real = plantedKeys.contains(key);
        score.rows++;
        score.spurious += real ? 0 : 1;
        if (segment.name().equals("all")) {
          listedInAll.add(key);
          if (row.rank() <= 20) {
            score.topRows++;
            score.topPlanted += real ? 1 : 0;
          }
        }
      }
    }
    ShortlistReport.Segment all = report.segments().get(0);
    out.printf(Locale.ROOT, "  %-10s offer screen: %,d of %,d pairs screened passed; %d rows listed in all%n",
        shape.wireName(), all.passedPairs(), all.screenedPairs(), all.suggestions().size());
    for (Map.Entry<String, Long> e : stream.plantedCounts().entrySet()) {
      if (e.getValue() >= settings.cohortFloor()) {
        score.aboveFloor++;
        boolean listed = listedInAll.contains(e.getKey());
        score.recalled += listed ? 1 : 0;
        if (!listed) {
          out.printf(Locale.ROOT, "  %-10s   not listed: %s (%d baskets)%s%n", shape.wireName(), e.getKey(), e.getValue(),
              whyNot(tables.get("all"), e.getKey(), settings.horizon()));
        }
      }
    }
    evaluate(stream, FlooredTable.of(tables.get("all"), new CohortFloor(settings.cohortFloor(), config.horizons())),
        settings.horizon(), score);
    return score;
  }

  /**
   * The median lift of the published pairs among the 20 most frequent items of the {@code day} horizon: independent
   * items (planted antecedents rank from 20 on), so a calibrated null model gives about 1.
   */
  private static String popularPairsLift(PairTable table, boolean adjusted) {
    var horizon = table.horizon("day").orElseThrow();
    List<String> items = new ArrayList<>(horizon.itemCounts().keySet());
    items.sort(Comparator.comparingDouble((String item) -> -horizon.itemCounts().get(item).value()).thenComparing(i -> i));
    List<Double> lifts = new ArrayList<>();
    for (int i = 0; i < Math.min(20, items.size()); i++) {
      for (int j = i + 1; j < Math.min(20, items.size()); j++) {
        table.pair(items.get(i), items.get(j), "day").ifPresent(p -> lifts.add(adjusted ? p.measures().lift()
            : p.measures().liftUnadjusted()));
      }
    }
    if (lifts.isEmpty()) {
      return "NA";
    }
    lifts.sort(Double::compare);
    return String.format(Locale.ROOT, "%.3f", lifts.get(lifts.size() / 2));
  }

  /** What the table says of a planted pair the offer list left out: its counts, expected count and tests. */
  private static String whyNot(PairTable table, String key, String horizon) {
    String[] ab = key.split("\\|", 2);
    return table.pair(ab[0], ab[1], horizon).map(p -> String.format(Locale.ROOT,
        ": n_ab %.0f [%.0f, %.0f], E %.1f, dispersion %.2f, lift %.2f, confidence %.2f / %.2f, p %.2e",
        p.counts().countAB().value(), p.counts().countAB().lower(), p.counts().countAB().upper(),
        p.measures().expectedCountAB(), p.counts().pairCountDispersion(), p.measures().lift(),
        p.measures().confidenceAB(), p.measures().confidenceBA(), p.measures().associationPValue()))
        .orElse(": not tracked");
  }

  /** Held-out baskets, one item hidden: hit@10 of the suggestions (both null models) and of the most popular items. */
  private void evaluate(RulesStream stream, FlooredTable table, String horizon, Score score) {
    Suggester suggester = Suggester.defaults();
    List<String> popular = new ArrayList<>(table.items(horizon).keySet());
    Map<String, Estimate> counts = table.items(horizon);
    popular.sort(Comparator.comparingDouble((String item) -> -counts.get(item).value()).thenComparing(item -> item));
    for (int i = 0; i < testBaskets; i++) {
      List<String> basket = stream.basket();
      if (basket.size() < 2) {
        continue;
      }
      int hidden = (int) (stream.nextDouble() * basket.size());
      List<String> rest = new ArrayList<>(basket);
      String item = rest.remove(hidden);
      score.trials++;
      score.hits += hit(suggester, table, rest, horizon, Measure.SHRUNK_LIFT, item) ? 1 : 0;
      score.hitsUnadjusted += hit(suggester, table, rest, horizon, Measure.SHRUNK_LIFT_UNADJUSTED, item) ? 1 : 0;
      int shown = 0;
      for (int p = 0; p < popular.size() && shown < 10; p++) {
        if (!rest.contains(popular.get(p))) {
          shown++;
          if (popular.get(p).equals(item)) {
            score.hitsPopular++;
            break;
          }
        }
      }
    }
  }

  private static boolean hit(Suggester suggester, FlooredTable table, List<String> rest, String horizon, Measure measure,
      String hidden) {
    SuggestionRequest request = SuggestionRequest.of(rest).withHorizon(horizon).withMeasure(measure).withCount(10)
        .withConfidenceBand(0, 1).withRanking(SuggestionRanking.POSTERIOR);
    for (Suggestion suggestion : suggester.suggest(table, request).suggestions()) {
      if (suggestion.item().equals(hidden)) {
        return true;
      }
    }
    return false;
  }
}
