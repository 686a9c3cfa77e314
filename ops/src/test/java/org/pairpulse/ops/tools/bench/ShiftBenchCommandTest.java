package org.pairpulse.ops.tools.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.MainTestAccess;
import org.pairpulse.ops.analysis.backtest.BacktestRun;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;

/** {@code pairpulse bench shift} on a tiny run: progress, then the RESULT line, last, in its exact format. */
class ShiftBenchCommandTest {
  static final Pattern RESULT = Pattern.compile("RESULT shift detected=\\d+/\\d+ delay_sim_minutes_median=(\\d+|NA)"
      + " false_alerts_per_sim_day=\\d+\\.\\d{3} hit_at_10=(\\d\\.\\d{4}|NA) hit_at_10_nightly=(\\d\\.\\d{4}|NA)"
      + " hit_at_10_popular=(\\d\\.\\d{4}|NA)");

  @TempDir
  Path directory;

  /** {@code bench shift} with a small engine ({@code --config}) and these options; exit 0; what it printed. */
  private String shift(String... options) throws Exception {
    Files.writeString(directory.resolve("small.properties"),
        "engine.tracked.pair.capacity=512\nengine.tracked.item.capacity=512\nserve.cohort.floor=5\n");
    List<String> args = new ArrayList<>(
        List.of("bench", "shift", "--config", directory.resolve("small.properties").toString()));
    args.addAll(List.of(options));
    MainTestAccess.Run run = MainTestAccess.run(args.toArray(String[]::new));
    assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
    return run.out();
  }

  /** The last line of {@code out}, checked against the published RESULT format. */
  private static String lastLine(String out) {
    String[] lines = out.strip().split("\n");
    String last = lines[lines.length - 1];
    assertTrue(RESULT.matcher(last).matches(), last);
    return last;
  }

  @Test
  void printsProgressThenTheResultLineLast() throws Exception {
    String out = shift("--days", "2", "--baskets-per-minute", "1", "--refresh-every", "1h", "--eval-share", "0.5",
        "--work-dir", directory.resolve("work").toString());
    String last = lastLine(out);
    assertTrue(last.startsWith("RESULT shift detected=0/0 delay_sim_minutes_median=NA "), "no planted change in 2 days");
    assertTrue(out.contains("bench shift: scenario of 2 simulated days"), out);
    assertTrue(out.contains("2026-06-02T00:00:00Z  table v"), "one progress line per simulated day");
    assertTrue(Files.isRegularFile(directory.resolve("work").resolve(ScenarioFiles.GROUND_TRUTH_FILE)));
    assertTrue(Files.isRegularFile(directory.resolve("work").resolve(BacktestRun.JSON_FILE)));
    // the hit rates are numbers: evaluation ran
    assertTrue(!last.contains("hit_at_10=NA"), last);
  }

  /**
   * Six days hold all three planted changes: the two emerging pairs of day 3 (the e-sports pair and the new
   * handset's launch case) and the fading pair of day 5. Which of them are found is the detector's matter.
   */
  @Test
  void sixDaysHoldThreePlantedChanges() throws Exception {
    String out = shift("--days", "6", "--baskets-per-minute", "2", "--refresh-every", "2h", "--eval-share", "0.05");
    String last = lastLine(out);
    assertTrue(last.matches("RESULT shift detected=[0-3]/3 .*"), last);
    // the reference detector on exact counts ran on the same baskets, change by change
    assertTrue(out.matches("(?s).*reference detector on exact counts: [0-3]/3 planted changes.*"),
        out);
    assertTrue(out.contains("delay ratio to the reference"), out);
  }
}
