package org.pairpulse.ops.analysis.backtest;

import io.micrometer.core.instrument.MeterRegistry;
import java.io.IOException;
import java.io.PrintWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ingest.file.ReadProgress;
import org.pairpulse.ops.product.evaluation.EvaluationMethod;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.ops.product.evaluation.Tally;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertTransition;

/**
 * One backtest of one file: read through {@link ReplaySource}, replayed by {@link Backtest}, scored against a
 * ground truth if one is given, written as JSON ({@value #JSON_FILE}) and summarised for people.
 *
 * @param inputName the input file's name
 * @param input what the file gave (lines, baskets, duplicates, dead letters)
 * @param result the replay's result
 * @param detection the score against the ground truth, or null
 */
public record BacktestRun(String inputName, FileSource.Result input, BacktestResult result, Detection detection) {
  public static final String JSON_FILE = "backtest.json";

  /**
   * Replays {@code file}.
   *
   * @param truth the ground truth to score against, or null
   * @param progress the progress display, or null
   * @param listener replay callbacks, or null
   * @param registry where the evaluation's meters go, or null
   */
  public static BacktestRun run(Path file, BacktestSettings settings, ScenarioGroundTruth truth, ReadProgress progress,
      Backtest.Listener listener, MeterRegistry registry) throws IOException {
    return run(file, settings, truth, progress, listener, registry, true);
  }

  /**
   * Replays {@code file}; {@code readAhead}: the file is read and decoded on a second thread
   * ({@link ReplaySource#readAhead}; the same baskets in the same order) and what reads the tables (evaluation, drift,
   * summaries) runs on a third ({@link Backtest}, pipelined), so the same result on more cores; else all on the
   * caller's thread.
   */
  public static BacktestRun run(Path file, BacktestSettings settings, ScenarioGroundTruth truth, ReadProgress progress,
      Backtest.Listener listener, MeterRegistry registry, boolean readAhead) throws IOException {
    Set<PairKey> focus = new HashSet<>();
    if (truth != null) {
      for (PlantedPair pair : truth.planted()) {
        if (pair.kind() == PlantedKind.EMERGING || pair.kind() == PlantedKind.FADING) {
          focus.add(PairKey.of(pair.items().get(0), pair.items().get(1)));
        }
      }
    }
    Backtest backtest = new Backtest(settings, listener, registry, focus, readAhead);
    ReplaySource source = new ReplaySource(settings.limits(), settings.front());
    FileSource.Result input = readAhead ? source.readAhead(file, progress, backtest::accept)
        : source.read(file, progress, backtest::accept);
    BacktestResult result = backtest.finish();
    Detection detection = truth == null ? null
        : Detection.score(truth, result.alerts(), result.firstEventMillis(), result.lastEventMillis());
    return new BacktestRun(file.getFileName().toString(), input, result, detection);
  }

  /** Writes {@value #JSON_FILE} into {@code directory} (created if absent); returns its path. */
  public Path writeJson(Path directory) throws IOException {
    Files.createDirectories(directory);
    Path file = directory.resolve(JSON_FILE);
    try (Writer out = Files.newBufferedWriter(file, StandardCharsets.UTF_8)) {
      BacktestJson.write(out, inputName, input, result, detection);
    }
    return file;
  }

  /** The tallies over the evaluated baskets at or after the first planted change (all, without ground truth). */
  public java.util.Map<EvaluationMethod, Tally> afterFirstChange() {
    long from = detection != null && detection.firstChangeMillis().isPresent()
        ? detection.firstChangeMillis().getAsLong() : Long.MIN_VALUE;
    return result.evaluation().tallies(from, Long.MAX_VALUE);
  }

  /**
   * The period the shift benchmark scores hit rates over, "the days after a planted shift": for each planted
   * emerging or fading change inside the replay, the simulated day (24 h) that follows it, [change, change + 24 h),
   * united. This is where a nightly rebuild can lag the change; outside it both tables have seen the same regime
   * for a day. Empty without a ground truth or without a change inside the replay.
   */
  public List<long[]> daysAfterChanges() {
    return daysAfterChanges(detection);
  }

  /** {@link #daysAfterChanges()} of a detection score (null: none). */
  public static List<long[]> daysAfterChanges(Detection detection) {
    List<long[]> windows = new ArrayList<>();
    if (detection != null) {
      for (Detection.PlantedEvent event : detection.events()) {
        windows.add(new long[] {event.changeMillis(), event.changeMillis() + BacktestSettings.DAY_MILLIS});
      }
    }
    windows.sort(java.util.Comparator.comparingLong(w -> w[0]));
    return windows;
  }

  /** Whether an event time lies in one of {@code windows} ([from, to) each). */
  public static boolean inWindows(List<long[]> windows, long eventMillis) {
    for (long[] w : windows) {
      if (eventMillis >= w[0] && eventMillis < w[1]) {
        return true;
      }
    }
    return false;
  }

  /**
   * The tallies over {@link #daysAfterChanges()} ({@code focusOnly}: the planted-pair trials among them); over every
   * trial when no planted change lies inside the replay (as {@link #afterFirstChange()}).
   */
  public java.util.Map<EvaluationMethod, Tally> daysAfterChangesTallies(boolean focusOnly) {
    List<long[]> windows = daysAfterChanges();
    return result.evaluation().tallies(t -> windows.isEmpty() || inWindows(windows, t), focusOnly);
  }

  /** A short summary for people. */
  public void printSummary(PrintWriter out) {
    out.printf(Locale.ROOT, "backtest %s: %,d baskets from %,d lines (%,d duplicates, %,d dead letters)%n", inputName,
        input.baskets(), input.lines(), input.duplicates(), input.deadLetterTotal());
    if (result.baskets() > 0) {
      out.printf(Locale.ROOT, "  event time %s .. %s (%.2f simulated days), %,d refreshes every %s, %,d tracked pairs%n",
          Instant.ofEpochMilli(result.firstEventMillis()), Instant.ofEpochMilli(result.lastEventMillis()),
          result.simulatedDays(), result.refreshes(), DurationText.format(result.settings().refreshEveryMillis()),
          result.engineStats().trackedPairs());
    }
    long raised = result.alerts().stream().filter(a -> a.transition() == AlertTransition.RAISED).count();
    out.printf(Locale.ROOT, "  alerts: %d raised, %d resolved%n", raised, result.alerts().size() - raised);
    int shown = 0;
    for (AlertEvent alert : result.alerts()) {
      if (alert.transition() != AlertTransition.RAISED) {
        continue;
      }
      if (shown++ == 10) {
        out.printf(Locale.ROOT, "    ... (%d more in %s)%n", raised - 10, JSON_FILE);
        break;
      }
      out.printf(Locale.ROOT, "    %s %-8s %s + %s: %s%n", Instant.ofEpochMilli(alert.atMillis()), alert.kind().wireName(),
          alert.pair().first(), alert.pair().second(), alert.summary());
    }
    Evaluator evaluation = result.evaluation();
    if (evaluation != null) {
      int k = evaluation.settings().k();
      out.printf(Locale.ROOT, "  evaluation (test-then-train, %,d baskets, horizon %s, %s): hit@%d / MRR%n",
          evaluation.trials(), evaluation.settings().horizon(), evaluation.settings().measure().wireName(), k);
      // the first day's nightly table is the first refresh's, nearly empty: compare from the second day on too
      long secondDay = Math.floorDiv(result.firstEventMillis(), BacktestSettings.DAY_MILLIS) * BacktestSettings.DAY_MILLIS
          + BacktestSettings.DAY_MILLIS;
      long afterFirstDay = evaluation.tally(EvaluationMethod.INCREMENTAL, secondDay, Long.MAX_VALUE).trials();
      if (afterFirstDay > 0) {
        out.printf(Locale.ROOT, "    %-11s %-17s from %s (%,d baskets; the first day's nightly table is nearly empty)%n",
            "", "all trials", Instant.ofEpochMilli(secondDay), afterFirstDay);
      }
      for (EvaluationMethod method : EvaluationMethod.values()) {
        Tally tally = evaluation.tally(method);
        String all = String.format(Locale.ROOT, "%.4f / %.4f", tally.hitRate(k), tally.meanReciprocalRank());
        String later = "";
        if (afterFirstDay > 0) {
          Tally after = evaluation.tally(method, secondDay, Long.MAX_VALUE);
          later = String.format(Locale.ROOT, "%.4f / %.4f", after.hitRate(k), after.meanReciprocalRank());
        }
        out.printf(Locale.ROOT, "    %-11s %-17s %s%n", method.wireName(), all, later);
      }
    }
    if (detection != null) {
      double median = detection.medianDelayMinutes();
      out.printf(Locale.ROOT, "  detection: %d/%d planted changes, median delay %s simulated minutes, %d false alerts"
          + " (%.2f per simulated day)%n", detection.detected(), detection.events().size(),
          Double.isNaN(median) ? "n/a" : String.format(Locale.ROOT, "%.0f", median), detection.falseAlerts(),
          detection.falseAlertsPerSimulatedDay());
      for (Detection.PlantedEvent event : detection.events()) {
        out.printf(Locale.ROOT, "    %-8s %s + %s at %s: %s%n", event.kind().name().toLowerCase(Locale.ROOT),
            event.pair().first(), event.pair().second(), Instant.ofEpochMilli(event.changeMillis()),
            event.detected() ? String.format(Locale.ROOT, "alerted after %.0f min", event.delayMinutes()) : "not alerted");
      }
    }
    out.flush();
  }
}
