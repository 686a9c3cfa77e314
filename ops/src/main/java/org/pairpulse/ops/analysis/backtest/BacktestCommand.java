package org.pairpulse.ops.analysis.backtest;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.concurrent.Callable;
import org.pairpulse.ingest.file.ReadProgress;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.ops.analysis.terminal.FileProgress;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.stats.Measure;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/** {@code pairpulse backtest}: replays a basket file on event time, see {@link Backtest}. */
@Command(name = "backtest", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Replays a basket file (JSON lines or CSV, as ingest reads them) through the engine on event time, without a"
            + " broker: refreshes, drift alerts and a test-then-train evaluation against a nightly rebuild and the most"
            + " popular items. Writes backtest.json (alert timeline, pair-table summaries, evaluation, detection) and"
            + " prints a short summary. The same input and settings give the same JSON, byte for byte."},
    exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:backtest done; JSON written", "1:the backtest failed (unreadable input, ...)", "2:invalid options"})
public final class BacktestCommand implements Callable<Integer> {
  @Spec
  CommandSpec spec;

  @Option(names = "--input", required = true, paramLabel = "FILE",
      description = "Basket file: .jsonl/.ndjson/.json (basket or line-item events) or .csv (basket_id,timestamp,item),"
          + " optionally .gz.")
  Path input;

  @Option(names = "--config", paramLabel = "FILE",
      description = "Settings file (Java properties): drift.*, serve.cohort.floor, ingest's front keys, engine.*,"
          + " backtest.*, evaluation.*; options below override it.")
  Path config;

  @Option(names = "--out", paramLabel = "DIR", description = "Output directory (default: ${DEFAULT-VALUE}).")
  Path out = Path.of("backtest-out");

  @Option(names = "--ground-truth", paramLabel = "FILE",
      description = "Scenario ground truth (ground-truth.json): scores detection of the planted changes.")
  Path groundTruth;

  @Option(names = "--refresh-every", paramLabel = "DURATION", converter = DurationText.class,
      description = "Event time between refreshes; must divide a day (default: 5m).")
  Duration refreshEvery;

  @Option(names = "--summary-every", paramLabel = "DURATION", converter = DurationText.class,
      description = "Event time between pair-table summaries in the JSON (default: 6h).")
  Duration summaryEvery;

  @Option(names = "--summary-top", paramLabel = "N", description = "Pairs per horizon in a summary (default: 10).")
  Integer summaryTop;

  @Option(names = "--eval-share", paramLabel = "X",
      description = "Share of baskets evaluated test-then-train, chosen by basket-id hash; 0 turns it off"
          + " (default: 0.10).")
  Double evalShare;

  @Option(names = "--eval-k", paramLabel = "N", description = "Suggestions per trial; hit rates at 1, 5 and N (default: 10).")
  Integer evalK;

  @Option(names = "--eval-horizon", paramLabel = "NAME", description = "Horizon of the evaluation's suggestions"
      + " (default: recent).")
  String evalHorizon;

  @Option(names = "--eval-measure", paramLabel = "NAME",
      description = "Scoring measure of the evaluation's suggestions, a wire name such as shrunk_lift or confidence"
          + " (default: shrunk_lift).")
  String evalMeasure;

  @Option(names = "--eval-ranking", paramLabel = "NAME",
      description = "Ranking of the evaluation's suggestions: posterior (ln support + Σ ln lift, the naive-Bayes"
          + " log-posterior) or association (Σ ln lift) (default: posterior).")
  String evalRanking;

  @Option(names = "--seed", paramLabel = "N", description = "Seed of the evaluation's sampling (default: 1).")
  Long seed;

  @Option(names = "--floor", paramLabel = "N", description = "Cohort floor in distinct baskets (default: 50).")
  Double floor;

  @Option(names = "--quiet", description = "No progress line.")
  boolean quiet;

  @Override
  public Integer call() throws Exception {
    BacktestSettings settings = settings(spec, config, refreshEvery, summaryEvery, summaryTop, evalShare, evalK,
        evalHorizon, evalMeasure, evalRanking, seed, floor);
    if (!Files.isRegularFile(input)) {
      throw new ParameterException(spec.commandLine(), "--input: no such file: " + input);
    }
    ScenarioGroundTruth truth = groundTruth == null ? null : GroundTruthFile.read(groundTruth);
    ReadProgress progress = quiet ? null : FileProgress.onStandardError("backtest", Files.size(input));
    BacktestRun run = BacktestRun.run(input, settings, truth, progress, null, null);
    Path json = run.writeJson(out);
    PrintWriter stdout = spec.commandLine().getOut();
    run.printSummary(stdout);
    stdout.println("  written: " + json);
    stdout.flush();
    return 0;
  }

  /** The settings from a file and options (null options keep the file's or the default value). */
  static BacktestSettings settings(CommandSpec spec, Path config, Duration refreshEvery, Duration summaryEvery,
      Integer summaryTop, Double evalShare, Integer evalK, String evalHorizon, String evalMeasure,
      String evalRanking, Long seed, Double floor)
      throws java.io.IOException {
    try {
      BacktestSettings settings = BacktestSettings.defaults();
      if (config != null) {
        if (!Files.isRegularFile(config)) {
          throw new ParameterException(spec.commandLine(), "--config: no such file: " + config);
        }
        PrintWriter err = spec.commandLine().getErr();
        settings = SettingsFile.read(config, settings, note -> {
          err.println("backtest: " + config + ": " + note);
          err.flush();
        });
      }
      BacktestSettings.Builder options = settings.toBuilder();
      if (refreshEvery != null) {
        options.refreshEveryMillis(refreshEvery.toMillis());
      }
      if (summaryEvery != null) {
        options.summaryEveryMillis(summaryEvery.toMillis());
      }
      if (summaryTop != null) {
        options.summaryTop(summaryTop);
      }
      if (floor != null) {
        options.cohortFloor(floor);
      }
      EvaluationSettings evaluation = settings.evaluation() != null ? settings.evaluation() : EvaluationSettings.defaults();
      if (evalShare != null) {
        evaluation = evaluation.withShare(evalShare);
      }
      if (evalK != null) {
        evaluation = evaluation.withK(evalK);
      }
      if (evalHorizon != null) {
        evaluation = evaluation.withHorizon(evalHorizon);
      }
      if (evalMeasure != null) {
        evaluation = evaluation.withMeasure(Measure.fromWireName(evalMeasure));
      }
      if (evalRanking != null) {
        evaluation = evaluation.withRanking(SuggestionRanking.fromWireName(evalRanking));
      }
      if (seed != null) {
        evaluation = evaluation.withSeed(seed);
      }
      return options.evaluation(evaluation.share() > 0 ? evaluation : null).build();
    } catch (IllegalArgumentException e) {
      throw new ParameterException(spec.commandLine(), e.getMessage(), e, null, null);
    }
  }
}
