package org.pairpulse.ops.tools.bench;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.pairpulse.ops.analysis.backtest.Backtest;
import org.pairpulse.ops.analysis.backtest.BacktestRun;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.DurationText;
import org.pairpulse.ops.analysis.backtest.SettingsFile;
import org.pairpulse.ops.analysis.backtest.SimulatedDays;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.table.PairTable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench replay}: what refreshes cost a replay. The seeded Kestrel Connect scenario (3 simulated
 * days by default) is written once as line items (CSV, as a user's export would be) and replayed through
 * {@code backtest} with its default settings three times in one process: with a 24-hour refresh (a warm-up for the
 * JIT, not scored), with the fine refresh (5 minutes) and with the 24-hour refresh again. Prints progress, then
 * <pre>
 * RESULT replay baskets_per_s=&lt;n&gt; refresh_ms_p50=&lt;x&gt; refresh_ms_p99=&lt;x&gt; overhead_ratio=&lt;x&gt;
 * </pre>
 * (one line): {@code baskets_per_s}, the baskets of the fine-refresh replay over its wall-clock seconds (file read,
 * decode, evaluation, counting and refreshes on the replay's thread); {@code refresh_ms_*}, percentiles of one
 * table build of the fine-refresh replay ({@code PairEngine.refresh} with the advance to the boundary: the full
 * default engine; a table holds counts, the rest is computed on read); {@code overhead_ratio}, the 24-hour replay's seconds over the fine one's (1 when refreshes cost
 * nothing). The whole refresh step (table, cohort floor, drift monitor, nightly table, summary) is printed beside
 * it. Run: {@code ops/pairpulse bench replay}.
 */
@Command(name = "replay", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Replays a seeded scenario through backtest with a fine refresh and with a 24-hour refresh, in one run, and"
            + " compares their speed. Prints progress, then one line:",
        "RESULT replay baskets_per_s=<n> refresh_ms_p50=<x> refresh_ms_p99=<x> overhead_ratio=<x>",
        "overhead_ratio = seconds with the 24-hour refresh / seconds with the fine refresh."})
public final class ReplayBenchCommand implements Callable<Integer> {
  /**
   * Three simulated days: the tracked table is full after the first, so the fine replay's refreshes are the full
   * default engine's; ten days (the first default) took over the 5-minute budget on a shared 2-core machine.
   */
  static final int DEFAULT_DAYS = 3;
  static final Duration COARSE_REFRESH = Duration.ofDays(1);

  @Mixin
  BenchMixin bench;

  @Option(names = "--days", paramLabel = "N", description = "Simulated days (default: ${DEFAULT-VALUE}).")
  int days = DEFAULT_DAYS;

  @Mixin
  ScenarioOptions scenarioOptions = new ScenarioOptions();

  @Option(names = "--refresh-every", paramLabel = "DURATION", converter = DurationText.class,
      description = "The fine refresh interval; must divide a day (default: 5m, the backtest's).")
  Duration refreshEvery = Duration.ofMillis(BacktestSettings.defaults().refreshEveryMillis());

  @Option(names = "--config", paramLabel = "FILE",
      description = "Settings file as for backtest (engine.*, drift.*, ...), applied over the backtest's defaults.")
  Path config;

  @Override
  public Integer call() throws Exception {
    PrintWriter out = bench.out();
    BacktestSettings fine;
    BacktestSettings coarse;
    ScenarioConfig scenario;
    try {
      BacktestSettings base = SettingsFile.readOption(config, BacktestSettings.defaults(), bench.err(),
          "bench replay");
      fine = base.toBuilder().refreshEveryMillis(refreshEvery.toMillis()).build();
      coarse = base.toBuilder().refreshEveryMillis(COARSE_REFRESH.toMillis()).build();
      scenario = scenarioOptions.scenario(days);
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage(), e);
    }
    Path directory = Files.createTempDirectory("pairpulse-replay-");
    try {
      long started = System.nanoTime();
      out.printf(Locale.ROOT, "bench replay: scenario of %d simulated days at %s baskets/min (seed %d)%n", days,
          scenarioOptions.basketsPerMinute, scenarioOptions.seed);
      out.flush();
      long written = ScenarioFiles.writeAll(new ScenarioGenerator(scenario), directory);
      Path file = directory.resolve(ScenarioFiles.CSV_FILE);
      out.printf(Locale.ROOT, "  %,d baskets written as line items (%s) in %.1f s%n", written, file.getFileName(),
          seconds(started));
      out.flush();
      Timed warmUp = replay(out, "warm-up (not scored)", file, coarse);
      Timed fineRun = replay(out, "fine refresh", file, fine);
      Timed coarseRun = replay(out, "24-hour refresh", file, coarse);
      if (fineRun.baskets() != coarseRun.baskets() || warmUp.baskets() != coarseRun.baskets()) {
        throw new IllegalStateException("the replays read different baskets: " + fineRun.baskets() + " and "
            + coarseRun.baskets());
      }
      double ratio = coarseRun.seconds() / fineRun.seconds();
      out.printf(Locale.ROOT, "  %.1f s in all%n", seconds(started));
      out.println(resultLine(fineRun.baskets() / fineRun.seconds(), fineRun.tableMillis(), ratio));
      out.flush();
      return 0;
    } finally {
      ShiftBenchCommand.deleteTree(directory);
    }
  }

  /** One replay's size, wall-clock time and refresh costs. */
  record Timed(long baskets, double seconds, double[] tableMillis, double[] stepMillis) {}

  private static Timed replay(PrintWriter out, String label, Path file, BacktestSettings settings) throws IOException {
    out.printf(Locale.ROOT, "  replay, %s: refresh every %s%n", label, DurationText.format(settings.refreshEveryMillis()));
    out.flush();
    RefreshTimes times = new RefreshTimes(out);
    long started = System.nanoTime();
    times.startedNanos = started;
    BacktestRun run = BacktestRun.run(file, settings, null, null, times, null);
    double seconds = seconds(started);
    double[] table = times.tableMillis();
    double[] step = times.stepMillis();
    long baskets = run.result().baskets();
    out.printf(Locale.ROOT, "    %,d baskets in %.2f s (%,.0f baskets/s), %,d refreshes, %,d tracked pairs%n", baskets,
        seconds, baskets / seconds, table.length, run.result().engineStats().trackedPairs());
    out.printf(Locale.ROOT, "    table build ms p50 %.2f p99 %.2f; whole refresh step ms p50 %.2f p99 %.2f;"
        + " refresh steps %.1f s of %.1f s%n", percentile(table, 0.50), percentile(table, 0.99),
        percentile(step, 0.50), percentile(step, 0.99), Arrays.stream(step).sum() / 1000, seconds);
    out.flush();
    return new Timed(baskets, seconds, table, step);
  }

  static String resultLine(double basketsPerSecond, double[] tableMillis, double overheadRatio) {
    return String.format(Locale.ROOT, "RESULT replay baskets_per_s=%.0f refresh_ms_p50=%.3f refresh_ms_p99=%.3f"
        + " overhead_ratio=%.3f", basketsPerSecond, percentile(tableMillis, 0.50), percentile(tableMillis, 0.99),
        overheadRatio);
  }

  /** The nearest-rank percentile (common practice); NaN for no values. */
  static double percentile(double[] values, double quantile) {
    if (values.length == 0) {
      return Double.NaN;
    }
    double[] sorted = values.clone();
    Arrays.sort(sorted);
    int rank = (int) Math.ceil(quantile * sorted.length);
    return sorted[Math.max(0, Math.min(sorted.length - 1, rank - 1))];
  }

  /** Collects each refresh's cost and prints one progress line per simulated day. */
  private static final class RefreshTimes implements Backtest.Listener {
    private final PrintWriter out;
    private double[] table = new double[1024];
    private double[] step = new double[1024];
    private int count;
    private final SimulatedDays days = new SimulatedDays();
    long startedNanos;

    RefreshTimes(PrintWriter out) {
      this.out = out;
    }

    @Override
    public void refreshCost(long tableNanos, long stepNanos) {
      if (count == table.length) {
        table = Arrays.copyOf(table, count * 2);
        step = Arrays.copyOf(step, count * 2);
      }
      table[count] = tableNanos / 1e6;
      step[count] = stepNanos / 1e6;
      count++;
    }

    @Override
    public void refreshed(long atMillis, PairTable pairs, FlooredTable floored, List<AlertEvent> events) {
      if (days.refreshed(atMillis, events)) {
        out.printf(Locale.ROOT, "    %s  table v%d, %,d tracked pairs; %.1f s%n", Instant.ofEpochMilli(atMillis),
            pairs.version(), pairs.pairCount(), seconds(startedNanos));
        out.flush();
      }
    }

    double[] tableMillis() {
      return Arrays.copyOf(table, count);
    }

    double[] stepMillis() {
      return Arrays.copyOf(step, count);
    }
  }

  private static double seconds(long startedNanos) {
    return (System.nanoTime() - startedNanos) / 1e9;
  }
}
