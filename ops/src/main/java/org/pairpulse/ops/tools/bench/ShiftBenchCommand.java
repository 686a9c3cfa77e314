package org.pairpulse.ops.tools.bench;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import java.util.stream.Stream;
import org.pairpulse.ops.analysis.backtest.Backtest;
import org.pairpulse.ops.analysis.backtest.BacktestRun;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.Detection;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.ops.analysis.backtest.ReplaySource;
import org.pairpulse.ops.tools.drift.DriftScore;
import org.pairpulse.ops.tools.drift.ExactDriftDetector;
import org.pairpulse.ops.analysis.backtest.DurationText;
import org.pairpulse.ops.analysis.backtest.SettingsFile;
import org.pairpulse.ops.analysis.backtest.SimulatedDays;
import org.pairpulse.ops.product.evaluation.EvaluationMethod;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.evaluation.Tally;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.table.PairTable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench shift}: the Kestrel Connect scenario (planted emerging and fading pairs, known start times)
 * written to files and replayed by the backtest with its ground truth; prints progress, a summary and, last,
 * <pre>
 * RESULT shift detected=&lt;k&gt;/&lt;m&gt; delay_sim_minutes_median=&lt;n&gt; false_alerts_per_sim_day=&lt;x&gt;
 *     hit_at_10=&lt;x&gt; hit_at_10_nightly=&lt;x&gt; hit_at_10_popular=&lt;x&gt;
 * </pre>
 * (one line). m counts the planted emerging and fading changes inside the run (3 with the defaults: the e-sports pair
 * from day 3 12:00, the new handset's launch case from day 3 15:00, the roaming pair's end at day 5 00:00); the
 * delay is from the planted change to the alert, in simulated minutes (median over the detected ones, {@code NA}
 * when none); false alerts follow {@link Detection}; the hit rates are over the evaluated baskets of the simulated day after each planted change
 * ({@link BacktestRun#daysAfterChanges()}: day 3 12:00 to day 4 15:00 and day 5 00:00 to day 6 00:00 with the
 * defaults). Run: {@code ops/pairpulse bench shift}; about 3 minutes of CPU with the defaults (7 minutes of wall clock on
 * the shared, loaded 2-core machine where it was measured).
 */
@Command(name = "shift", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Plays the Kestrel Connect scenario (two planted emerging pairs, one fading) through the backtest with its ground"
            + " truth: detection of the planted changes and test-then-train hit rates against a nightly rebuild and"
            + " the most popular items. Prints progress, then one line:",
        "RESULT shift detected=<k>/<m> delay_sim_minutes_median=<n> false_alerts_per_sim_day=<x> hit_at_10=<x>"
            + " hit_at_10_nightly=<x> hit_at_10_popular=<x>",
        "Hit rates are over the baskets of the simulated day (24 h) after each planted change."})
public final class ShiftBenchCommand implements Callable<Integer> {
  @Mixin
  BenchMixin bench;

  @Option(names = "--days", paramLabel = "N", description = "Simulated days (default: ${DEFAULT-VALUE}; the planted"
      + " emerging pairs start on day 3 and the fading change is at day 5, so fewer than 6 days see only the emerging"
      + " ones).")
  int days = ScenarioConfig.DEFAULT_DURATION_DAYS;

  @Mixin
  ScenarioOptions scenarioOptions = new ScenarioOptions();

  @Mixin
  DwellRefreshOption refresh = new DwellRefreshOption();

  @Option(names = "--eval-share", paramLabel = "X", description = "Share of baskets evaluated (default: ${DEFAULT-VALUE}).")
  double evalShare = EvaluationSettings.DEFAULT_SHARE;

  @Option(names = "--config", paramLabel = "FILE",
      description = "Settings file as for backtest (drift.*, engine.*, ...), applied over the benchmark's settings.")
  Path config;

  @Option(names = "--work-dir", paramLabel = "DIR",
      description = "Where the scenario files and backtest.json go (default: a temporary directory, deleted at the end).")
  Path workDir;

  @Override
  public Integer call() throws Exception {
    PrintWriter out = bench.out();
    BacktestSettings settings = settings();
    ScenarioConfig scenario;
    try {
      scenario = scenarioOptions.scenario(days);
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage(), e);
    }
    boolean temporary = workDir == null;
    Path directory = temporary ? Files.createTempDirectory("pairpulse-shift-") : workDir;
    try {
      long started = System.nanoTime();
      out.printf(Locale.ROOT, "bench shift: scenario of %d simulated days at %s baskets/min (seed %d) into %s%n", days,
          scenarioOptions.basketsPerMinute, scenarioOptions.seed, directory);
      out.flush();
      ScenarioGenerator generator = new ScenarioGenerator(scenario);
      long baskets = ScenarioFiles.writeAll(generator, directory);
      out.printf(Locale.ROOT, "  %,d baskets written in %.1f s; replaying (refresh every %s, evaluation share %.2f)%n",
          baskets, seconds(started), DurationText.format(settings.refreshEveryMillis()),
          settings.evaluation() == null ? 0.0 : settings.evaluation().share());
      out.flush();
      ScenarioGroundTruth truth = generator.groundTruth();
      BacktestRun run = BacktestRun.run(directory.resolve(ScenarioFiles.JSON_LINES_FILE), settings, truth, null,
          new DailyProgress(out, started), null);
      if (!temporary) {
        out.println("  written: " + run.writeJson(directory));
      }
      run.printSummary(out);
      printDaysAfterChanges(out, run);
      printReference(out, directory.resolve(ScenarioFiles.JSON_LINES_FILE), settings, truth, run);
      out.printf(Locale.ROOT, "  %.1f s in all%n", seconds(started));
      out.println(resultLine(run));
      out.flush();
      return 0;
    } finally {
      if (temporary) {
        deleteTree(directory);
      }
    }
  }

  BacktestSettings settings() throws IOException {
    BacktestSettings settings = benchmarkSettings();
    try {
      settings = SettingsFile.readOption(config, settings, bench.err(), "bench shift");
      EvaluationSettings evaluation = settings.evaluation() != null ? settings.evaluation() : EvaluationSettings.defaults();
      return settings.toBuilder().refreshEveryMillis(refresh.millis())
          .evaluation(evalShare > 0 ? evaluation.withShare(evalShare).withK(10) : null).build();
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage(), e);
    }
  }

  /** The benchmark's settings before options: the backtest's defaults (production engine and drift settings). */
  static BacktestSettings benchmarkSettings() {
    return BacktestSettings.builder().summaryEveryMillis(Duration.ofDays(1).toMillis()).build();
  }

  /** The RESULT line of a run with ground truth and evaluation. */
  static String resultLine(BacktestRun run) {
    Detection detection = run.detection();
    double median = detection.medianDelayMinutes();
    String delay = Double.isNaN(median) ? "NA" : Long.toString(Math.round(median));
    String hits;
    if (run.result().evaluation() == null) {
      hits = " hit_at_10=NA hit_at_10_nightly=NA hit_at_10_popular=NA";
    } else {
      Map<EvaluationMethod, Tally> after = run.daysAfterChangesTallies(false);
      hits = String.format(Locale.ROOT, " hit_at_10=%s hit_at_10_nightly=%s hit_at_10_popular=%s",
          rate(after.get(EvaluationMethod.INCREMENTAL)), rate(after.get(EvaluationMethod.NIGHTLY)),
          rate(after.get(EvaluationMethod.POPULAR)));
    }
    return String.format(Locale.ROOT, "RESULT shift detected=%d/%d delay_sim_minutes_median=%s"
        + " false_alerts_per_sim_day=%s%s", detection.detected(), detection.events().size(), delay,
        Double.isNaN(detection.falseAlertsPerSimulatedDay()) ? "NA"
            : String.format(Locale.ROOT, "%.3f", detection.falseAlertsPerSimulatedDay()), hits);
  }

  /** The hit rates of the RESULT line, with their period and the planted-pair trials among them. */
  /**
   * The reference detector on exact counts ({@link ExactDriftDetector}, the drift benchmark's) on the same baskets:
   * its delay per planted change, the delay the evidence allows, and pairpulse's delay over it (the reference's delay
   * floored at one refresh interval).
   */
  private static void printReference(PrintWriter out, Path file, BacktestSettings settings, ScenarioGroundTruth truth,
      BacktestRun run) throws IOException {
    List<ReplayBasket> baskets = new ArrayList<>();
    new ReplaySource(settings.limits(), settings.front()).read(file, null, baskets::add);
    ExactDriftDetector.Result reference = new ExactDriftDetector(ExactDriftDetector.Settings.defaults()).run(baskets);
    Detection exact = Detection.score(truth, reference.alerts(), reference.firstEventMillis(),
        reference.lastEventMillis());
    out.printf(Locale.ROOT, "  reference detector on exact counts: %d/%d planted changes, median delay %s"
        + " (simulated), %d false alarms%n", exact.detected(), exact.events().size(), minutes(exact.medianDelayMinutes()),
        exact.falseAlerts());
    List<Double> ratios = new ArrayList<>();
    for (int i = 0; i < run.detection().events().size() && i < exact.events().size(); i++) {
      Detection.PlantedEvent ours = run.detection().events().get(i);
      Detection.PlantedEvent theirs = exact.events().get(i);
      out.printf(Locale.ROOT, "    %-8s %s + %s: pairpulse %s, exact counts %s%n", ours.kind().name().toLowerCase(Locale.ROOT),
          ours.pair().first(), ours.pair().second(), minutes(ours.delayMinutes()), minutes(theirs.delayMinutes()));
      if (ours.detected() && theirs.detected()) {
        ratios.add(ours.delayMinutes() / Math.max(theirs.delayMinutes(), settings.refreshEveryMillis() / 60_000.0));
      }
    }
    double median = DriftScore.median(ratios.stream().mapToDouble(Double::doubleValue).toArray());
    out.printf(Locale.ROOT, "  delay ratio to the reference, median over the changes both found: %s%n",
        Double.isNaN(median) ? "NA" : String.format(Locale.ROOT, "%.2f", median));
    out.flush();
  }

  private static String minutes(double value) {
    return Double.isNaN(value) ? "not found" : String.format(Locale.ROOT, "%.0f min", value);
  }

  private static void printDaysAfterChanges(PrintWriter out, BacktestRun run) {
    if (run.result().evaluation() == null || run.daysAfterChanges().isEmpty()) {
      return;
    }
    StringBuilder period = new StringBuilder();
    for (long[] w : run.daysAfterChanges()) {
      period.append(period.length() == 0 ? "" : ", ").append(Instant.ofEpochMilli(w[0])).append(" .. ")
          .append(Instant.ofEpochMilli(w[1]));
    }
    out.println("  hit@10 over the day after each planted change (" + period + "):");
    Map<EvaluationMethod, Tally> all = run.daysAfterChangesTallies(false);
    Map<EvaluationMethod, Tally> focus = run.daysAfterChangesTallies(true);
    for (EvaluationMethod method : EvaluationMethod.values()) {
      out.printf(Locale.ROOT, "    %-11s %s over %,d trials; %s over the %,d whose hidden item forms a planted pair%n",
          method.wireName(), rate(all.get(method)), all.get(method).trials(), rate(focus.get(method)),
          focus.get(method).trials());
    }
  }

  private static String rate(Tally tally) {
    double rate = tally.hitRate(10);
    return Double.isNaN(rate) ? "NA" : String.format(Locale.ROOT, "%.4f", rate);
  }

  private static double seconds(long startedNanos) {
    return (System.nanoTime() - startedNanos) / 1e9;
  }

  /** One progress line per simulated day. */
  private static final class DailyProgress implements Backtest.Listener {
    private final PrintWriter out;
    private final long startedNanos;
    private final SimulatedDays days = new SimulatedDays();

    DailyProgress(PrintWriter out, long startedNanos) {
      this.out = out;
      this.startedNanos = startedNanos;
    }

    @Override
    public void refreshed(long atMillis, PairTable table, FlooredTable floored, List<AlertEvent> events) {
      if (days.refreshed(atMillis, events)) {
        out.printf(Locale.ROOT, "  %s  table v%d: %,d tracked pairs, %,d published; %d alerts raised so far; %.1f s%n",
            Instant.ofEpochMilli(atMillis), table.version(), table.pairCount(), floored.publishedPairs(), days.raised(),
            seconds(startedNanos));
        out.flush();
      }
    }
  }

  static void deleteTree(Path directory) throws IOException {
    try (Stream<Path> paths = Files.walk(directory)) {
      for (Path path : paths.sorted(Comparator.reverseOrder()).toList()) {
        Files.deleteIfExists(path);
      }
    }
  }
}
