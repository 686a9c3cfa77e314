package org.pairpulse.ops.tools.bench;

import java.io.PrintWriter;
import java.time.Duration;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.EngineStats;
import org.pairpulse.sketch.bench.CountMinBenchmark;
import org.pairpulse.sketch.bench.EngineStream;
import org.pairpulse.sketch.bench.PairEngineBenchmark;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.horizon.HorizonSpec;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench sketch}: throughput, count-min comparison and accuracy of the sketch layer in one
 * run, ending with one {@code RESULT sketch ...} line ({@link SketchBenchResult}).
 *
 * <ol>
 *   <li>throughput: {@link PairEngineBenchmark} (JMH);</li>
 *   <li>count-min: {@link CountMinBenchmark}, pairpulse vs stream-lib at equal (ε, δ) (JMH, one run);</li>
 *   <li>accuracy: {@link AccuracyCheck} on an {@link AccuracyStream} against {@link ExactCounts}.</li>
 * </ol>
 * The two JMH benchmarks live beside the code they measure, in sketch's test sources ({@code org.pairpulse.sketch.bench},
 * shipped in sketch's test-jar, which ops depends on); JMH finds them by that jar's {@code META-INF/BenchmarkList}.
 * With the defaults it takes about a minute on 2 cores (plus the first build). Run: {@code ops/pairpulse bench sketch}.
 */
@Command(name = "sketch", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Benchmarks the sketch layer in one run: pair-update throughput of PairEngine.addBasket (default EngineConfig,"
            + " JMH), count-min update throughput against stream-lib at equal (epsilon, delta) (JMH), and accuracy of"
            + " the top pairs by lift against exact counts on a seeded 28-day stream.",
        "Prints progress, then one line:",
        "RESULT sketch pairs_per_s=<n> cms_ratio_vs_streamlib=<x> recall_at_100=<x> lift_rel_err_p95=<x>"
            + " state_bytes=<n> exact_bytes=<n>",
        "About a minute with the defaults."})
public final class SketchBenchCommand implements Callable<Integer> {
  @Mixin
  BenchMixin bench;

  @Option(names = "--seed", paramLabel = "N", description = "Random seed of every generated stream (default: ${DEFAULT-VALUE}).")
  long seed = 42;

  @Option(names = "--catalog-items", paramLabel = "N",
      description = "Items in the synthetic catalog (default: ${DEFAULT-VALUE}).")
  int catalogItems = 10_000;

  @Option(names = "--forks", paramLabel = "N",
      description = "JMH forks per benchmark; 0 runs in this JVM (quick checks only) (default: ${DEFAULT-VALUE}).")
  int forks = 1;

  @Option(names = "--warmup-iterations", paramLabel = "N", description = "JMH warmup iterations (default: ${DEFAULT-VALUE}).")
  int warmupIterations = 2;

  @Option(names = "--measurement-iterations", paramLabel = "N",
      description = "JMH measurement iterations (default: ${DEFAULT-VALUE}).")
  int measurementIterations = 3;

  @Option(names = "--iteration-millis", paramLabel = "MS",
      description = "Length of one JMH iteration in milliseconds (default: ${DEFAULT-VALUE}).")
  int iterationMillis = 2000;

  @Option(names = "--fork-heap", paramLabel = "SIZE",
      description = "Maximum heap of the forked benchmark JVMs, as for -Xmx (default: ${DEFAULT-VALUE}).")
  String forkHeap = "2g";

  @Option(names = "--stream-baskets", paramLabel = "N",
      description = "Baskets in the pre-generated throughput stream (default: ${DEFAULT-VALUE}).")
  int streamBaskets = 1 << 20;

  @Option(names = "--cms-epsilon", paramLabel = "E",
      description = "Count-min relative error epsilon for the comparison (default: ${DEFAULT-VALUE}).")
  double cmsEpsilon = 0.001;

  @Option(names = "--cms-delta", paramLabel = "D",
      description = "Count-min failure probability delta; stream-lib gets confidence 1 - delta (default: ${DEFAULT-VALUE}).")
  double cmsDelta = 0.02;

  @Option(names = "--pair-occurrences", paramLabel = "N",
      description = "About how many pair occurrences the accuracy stream holds (default: ${DEFAULT-VALUE}).")
  long pairOccurrences = 10_000_000;

  @Option(names = "--days", paramLabel = "N", description = "Event-time span of the accuracy stream in days (default: ${DEFAULT-VALUE}).")
  int days = 28;

  @Option(names = "--zipf-exponent", paramLabel = "S",
      description = "Popularity exponent of the accuracy stream's background items (default: ${DEFAULT-VALUE}).")
  double zipfExponent = 1.2;

  @Option(names = "--planted-pairs", paramLabel = "N",
      description = "Associated pairs planted in the accuracy stream (default: ${DEFAULT-VALUE}).")
  int plantedPairs = 300;

  @Option(names = "--drifting-share", paramLabel = "F",
      description = "Share of planted pairs that fade or emerge, half each (default: ${DEFAULT-VALUE}).")
  double driftingShare = 0.2;

  @Option(names = "--support-floor", paramLabel = "F",
      description = "Minimum support n_ab/N of a pair in the top lists; 0.001 is a common-practice rule of thumb"
          + " (default: ${DEFAULT-VALUE}).")
  double supportFloor = 0.001;

  @Option(names = "--top", paramLabel = "K", description = "Size k of the top lists compared (default: ${DEFAULT-VALUE}).")
  int top = 100;

  @Option(names = "--detail-lines", paramLabel = "N",
      description = "Lines of misses and intruders shown per horizon (default: ${DEFAULT-VALUE}).")
  int detailLines = 12;

  @Override
  public Integer call() {
    validate();
    PrintWriter out = bench.out();
    PrintWriter err = bench.err();
    long started = System.nanoTime();
    EngineConfig config = EngineConfig.defaults();
    out.printf(Locale.ROOT, "bench sketch: java %s, %d cores, seed %d, engine config: %s%n", Runtime.version(),
        Runtime.getRuntime().availableProcessors(), seed, describe(config));

    // ---- phase 1: throughput of the whole sketch layer
    long phase = System.nanoTime();
    EngineStream preview = EngineStream.generate(seed, catalogItems, streamBaskets, PairEngineBenchmark.LAP_MILLIS);
    out.printf(Locale.ROOT, "phase 1/3 throughput: PairEngine.addBasket, one thread; stream %,d baskets over %s per lap, catalog %,d"
            + " (Zipf %.1f), %.2f items and %.2f pairs per basket%n", preview.size(),
        Duration.ofMillis(PairEngineBenchmark.LAP_MILLIS), catalogItems, EngineStream.ZIPF_EXPONENT, preview.meanItems(),
        preview.meanPairs());
    out.flush();
    Map<String, JmhRuns.Score> engineRuns = JmhRuns.run(PairEngineBenchmark.class.getName(), Map.of(
        "streamBaskets", Integer.toString(streamBaskets),
        "catalogItems", Integer.toString(catalogItems),
        "seed", Long.toString(seed)), jmh(), out, err);
    JmhRuns.Score engineRun = single(engineRuns, "addBasket");
    double basketsPerSecond = engineRun.score();
    double pairsPerSecond = engineRun.secondary().get("pairs");
    out.printf(Locale.ROOT, "phase 1/3 throughput: %,.0f baskets/s (99.9%% CI +/- %s) = %,.0f pairs/s; took %s%n",
        basketsPerSecond, error(engineRun), pairsPerSecond, seconds(phase));

    // ---- phase 2: raw count-min updates, ours vs stream-lib
    phase = System.nanoTime();
    CountMinSketch ours = CountMinBenchmark.pairpulseSketch(cmsEpsilon, cmsDelta, seed);
    out.printf(Locale.ROOT, "phase 2/3 count-min: epsilon %s, delta %s; pairpulse LINEAR width %d x depth %d (ceil(e/eps) to a"
            + " power of two, ceil(ln 1/delta)); stream-lib width %d x depth %d (ceil(2/eps), ceil(-ln(delta)/ln 2))%n",
        cmsEpsilon, cmsDelta, ours.width(), ours.depth(), CountMinBenchmark.streamLibWidth(cmsEpsilon),
        CountMinBenchmark.streamLibDepth(cmsDelta));
    out.printf(Locale.ROOT, "  stream-lib says: %s%n", CountMinBenchmark.streamLibSketch(cmsEpsilon, cmsDelta, seed));
    out.flush();
    Map<String, JmhRuns.Score> cmsRuns = JmhRuns.run(CountMinBenchmark.class.getName(), Map.of(
        "epsilon", Double.toString(cmsEpsilon),
        "delta", Double.toString(cmsDelta),
        "seed", Long.toString(seed)), jmh(), out, err);
    double oursPerSecond = single(cmsRuns, "pairpulseLinear").score();
    double theirsPerSecond = single(cmsRuns, "streamLib").score();
    double cmsRatio = oursPerSecond / theirsPerSecond;
    out.printf(Locale.ROOT, "phase 2/3 count-min: pairpulse %,.0f adds/s (+/- %s), stream-lib %,.0f adds/s (+/- %s), ratio %.3f;"
            + " took %s%n", oursPerSecond, error(single(cmsRuns, "pairpulseLinear")), theirsPerSecond,
        error(single(cmsRuns, "streamLib")), cmsRatio, seconds(phase));
    out.println("  note: stream-lib's add(long, long) builds its overflow-check message string on every call;"
        + " that allocation is part of its measured cost");

    // ---- phase 3: accuracy against exact counts
    phase = System.nanoTime();
    AccuracyStream.Workload workload = new AccuracyStream.Workload(seed, catalogItems, pairOccurrences, days, zipfExponent,
        plantedPairs, driftingShare);
    out.printf(Locale.ROOT, "phase 3/3 accuracy: %,d baskets of 2-6 items (~%,d pair occurrences) over %d days, catalog %,d"
            + " (Zipf %.2f), %d planted pairs (%.0f%% drifting: fading stop at %.0f%% of the span, emerging start at %.0f%%),"
            + " support floor %s of N, top %d%n",
        workload.basketCount(), pairOccurrences, days, catalogItems, zipfExponent, plantedPairs, driftingShare * 100,
        AccuracyStream.FADING_END * 100, AccuracyStream.EMERGING_START * 100, supportFloor, top);
    out.flush();
    AccuracyCheck.Report report = AccuracyCheck.run(workload, config, supportFloor, top, out);
    for (AccuracyCheck.HorizonResult horizon : report.horizons().values()) {
      out.printf(Locale.ROOT, "  accuracy %s: N %.1f (engine %.1f), floor %.1f baskets, distinct pairs %,d, above floor: exact %,d"
              + " engine %,d; recall_at_%d %.3f (%d/%d), lift_rel_err p95 %.4f max %.4f"
              + " (diagnostic: recall %.3f with the floor on the point estimate)%n",
          horizon.horizon(), horizon.baskets(), horizon.basketsEstimate(), supportFloor * horizon.baskets(),
          horizon.distinctPairs(), horizon.exactAboveFloor(), horizon.publishedAboveFloor(), top, horizon.recall(),
          horizon.found(), horizon.exactTop(), horizon.liftRelErrP95(), horizon.liftRelErrMax(),
          horizon.recallFloorOnPointEstimate());
      List<String> details = horizon.details();
      for (String detail : details.subList(0, Math.min(detailLines, details.size()))) {
        out.println("    " + detail);
      }
      if (details.size() > detailLines) {
        out.printf(Locale.ROOT, "    ... %d more (--detail-lines)%n", details.size() - detailLines);
      }
    }
    EngineStats stats = report.stats();
    out.printf(Locale.ROOT, "  engine: %,d tracked pairs, %,d admissions, %,d evictions, %,d capped baskets;"
            + " state %,d bytes vs exact %,d bytes (%.3f); exact by horizon %s%n",
        stats.trackedPairs(), stats.pairAdmissions(), stats.pairEvictions(), stats.cappedBaskets(), report.stateBytes(),
        report.exactBytes(), (double) report.stateBytes() / report.exactBytes(), report.exactBytesByHorizon());
    out.printf(Locale.ROOT, "phase 3/3 accuracy: took %s%n", seconds(phase));

    AccuracyCheck.HorizonResult baseline = report.horizons().get(HorizonSpec.BASELINE.name());
    if (baseline == null) {
      throw new IllegalStateException("the engine configuration has no '" + HorizonSpec.BASELINE.name() + "' horizon");
    }
    SketchBenchResult result = new SketchBenchResult(pairsPerSecond, cmsRatio, top, baseline.recall(),
        baseline.liftRelErrP95(), report.stateBytes(), report.exactBytes());
    out.printf(Locale.ROOT, "bench sketch: total %s%n", seconds(started));
    out.println(result.line());
    out.flush();
    return 0;
  }

  private void validate() {
    requireAtLeast("--catalog-items", catalogItems, 20);
    requireAtLeast("--forks", forks, 0);
    requireAtLeast("--warmup-iterations", warmupIterations, 0);
    requireAtLeast("--measurement-iterations", measurementIterations, 1);
    requireAtLeast("--iteration-millis", iterationMillis, 10);
    requireAtLeast("--stream-baskets", streamBaskets, 1);
    requireAtLeast("--pair-occurrences", pairOccurrences, 1000);
    requireAtLeast("--days", days, 1);
    requireAtLeast("--planted-pairs", plantedPairs, 0);
    requireAtLeast("--top", top, 1);
    requireAtLeast("--detail-lines", detailLines, 0);
    requireOpenUnit("--cms-epsilon", cmsEpsilon);
    requireOpenUnit("--cms-delta", cmsDelta);
    requireOpenUnit("--support-floor", supportFloor);
    if (!(driftingShare >= 0 && driftingShare <= 1)) {
      throw bench.usage("--drifting-share must be in [0, 1], got " + driftingShare);
    }
    if (!(zipfExponent >= 0 && zipfExponent <= 10)) {
      throw bench.usage("--zipf-exponent must be in [0, 10], got " + zipfExponent);
    }
    if (!forkHeap.matches("[0-9]+[kKmMgG]?")) {
      throw bench.usage("--fork-heap must be a size such as 2g or 1536m, got '" + forkHeap + "'");
    }
    try {
      new AccuracyStream(new AccuracyStream.Workload(seed, catalogItems, pairOccurrences, days, zipfExponent, plantedPairs,
          driftingShare));
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage());
    }
  }

  private void requireAtLeast(String option, long value, long min) {
    if (value < min) {
      throw bench.usage(option + " must be >= " + min + ", got " + value);
    }
  }

  private void requireOpenUnit(String option, double value) {
    if (!(value > 0 && value < 1)) {
      throw bench.usage(option + " must be in (0, 1), got " + value);
    }
  }

  private JmhRuns.Settings jmh() {
    return new JmhRuns.Settings(forks, warmupIterations, measurementIterations, iterationMillis, forkHeap);
  }

  private static JmhRuns.Score single(Map<String, JmhRuns.Score> runs, String method) {
    JmhRuns.Score score = runs.get(method);
    if (score == null) {
      throw new IllegalStateException("JMH returned no result for benchmark method " + method);
    }
    return score;
  }

  /** JMH's 99.9% confidence half-width of the primary score (n/a with one measurement). */
  private static String error(JmhRuns.Score run) {
    double error = run.error();
    return Double.isNaN(error) ? "n/a" : String.format(Locale.ROOT, "%,.0f", error);
  }

  private static String seconds(long startNanos) {
    return String.format(Locale.ROOT, "%.1f s", (System.nanoTime() - startNanos) / 1e9);
  }

  static String describe(EngineConfig config) {
    StringBuilder text = new StringBuilder();
    for (HorizonSpec horizon : config.horizons()) {
      text.append(horizon.name()).append(" (").append(horizon.describe()).append("), ");
    }
    text.append(String.format(Locale.ROOT, "item eps/delta %s/%s, pair eps/delta %s/%s (decay pair eps %s), tracked pairs %,d,"
            + " tracked items %,d, %s updates, ranked by a %s decay, bursts from %s", config.itemEpsilon(), config.itemDelta(),
        config.pairEpsilon(), config.pairDelta(), config.decayPairEpsilon(), config.trackedPairCapacity(),
        config.trackedItemCapacity(), config.updateRule(), config.trackingSpec().describe(), config.burstHorizon()));
    return text.toString();
  }
}
