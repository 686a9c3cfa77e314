package org.pairpulse.ops.tools.drift;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import org.pairpulse.ops.analysis.backtest.Backtest;
import org.pairpulse.ops.analysis.backtest.BacktestResult;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.DurationText;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.ops.analysis.backtest.SettingsFile;
import org.pairpulse.ops.analysis.backtest.SimulatedDays;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.ops.tools.bench.BenchMixin;
import org.pairpulse.ops.tools.bench.DwellRefreshOption;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench drift}: the drift family ({@link DriftFamily}: every {@link DriftShape} on one stream per
 * traffic level and seed) through {@link Backtest} with the default settings, and through the reference detector on
 * exact counts ({@link ExactDriftDetector}) on the same baskets; both scored by {@link DriftScore}. Prints progress,
 * one line per planted change (shape, traffic level, change time, pairpulse's delay, the reference's delay, direction
 * errors on the pair), and last, on one line:
 * <pre>
 * RESULT drift changes=&lt;n&gt; detected=&lt;d&gt;/&lt;n&gt; direction_errors=&lt;n&gt; delay_ratio_vs_exact_median=&lt;x&gt;
 *     delay_sim_minutes_median=&lt;x&gt; false_alerts_per_sim_day=&lt;x&gt; bundle_flaps=&lt;n&gt;
 * </pre>
 * {@code delay_ratio_vs_exact_median}: the median, over the changes both detected, of pairpulse's delay / max(the
 * reference's delay, the refresh interval); {@code NA} when none. The evaluation is off (it does not touch alerts).
 * Run: {@code ops/pairpulse bench drift}.
 */
@Command(name = "drift", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Plays the drift family (sudden, gradual, ride-on and new-popular emerging pairs, fading pairs in both"
            + " regimes, busy and quiet hours, a popularity spike, a rare-pair trap, steady pairs and bundles, a"
            + " weekend traffic shift) through the backtest with default settings and through a reference detector on"
            + " exact counts; scores both against the planted truth. Prints progress, then one line:",
        "RESULT drift changes=<n> detected=<d>/<n> direction_errors=<n> delay_ratio_vs_exact_median=<x>"
            + " delay_sim_minutes_median=<x> false_alerts_per_sim_day=<x> bundle_flaps=<n>"})
public final class DriftBenchCommand implements Callable<Integer> {
  @Mixin
  BenchMixin bench;

  @Option(names = "--days", paramLabel = "N", description = "Simulated days per stream (default: ${DEFAULT-VALUE};"
      + " the changes lie on days 2 to 5).")
  int days = DriftFamily.DEFAULT_DAYS;

  @Option(names = "--seed", paramLabel = "N", description = "Seed of the first stream; the others count up from it"
      + " (default: ${DEFAULT-VALUE}).")
  long seed = DriftFamily.DEFAULT_SEED;

  @Option(names = "--seeds", paramLabel = "N", description = "Seeds per traffic level (default: ${DEFAULT-VALUE}).")
  int seeds = 1;

  @Option(names = "--levels", paramLabel = "LEVEL", split = ",", description = "Traffic levels: quiet (4,000 baskets"
      + " per peak hour), busy (20,000) (default: quiet,busy).")
  List<String> levels = List.of("quiet", "busy");

  @Option(names = "--traffic-scale", paramLabel = "X", description = "Multiplies every level's basket rate (default:"
      + " ${DEFAULT-VALUE}; small values for a quick look).")
  double trafficScale = 1.0;

  @Mixin
  DwellRefreshOption refresh = new DwellRefreshOption();

  @Option(names = "--config", paramLabel = "FILE",
      description = "Settings file as for backtest (drift.*, engine.*, ...), applied over the defaults.")
  Path config;

  @Option(names = "--no-reference", description = "Skip the reference detector.")
  boolean noReference;

  @Option(names = "--threads", paramLabel = "N", description = "Streams replayed at once (default: the available"
      + " processors, at most 2).")
  int threads = Math.min(2, Runtime.getRuntime().availableProcessors());

  /** One stream's scores: pairpulse's and the reference's (null when skipped). */
  private record StreamScores(DriftScore ours, DriftScore exact, DriftScore floored) {}

  @Override
  public Integer call() throws Exception {
    PrintWriter out = bench.out();
    BacktestSettings settings = settings();
    List<DriftStream> streams = streams();
    if (threads < 1) {
      throw bench.usage("--threads must be >= 1, got " + threads);
    }
    long started = System.nanoTime();
    double refreshMinutes = settings.refreshEveryMillis() / 60_000.0;
    out.printf(Locale.ROOT, "bench drift: %d stream(s) of %d simulated days, refresh every %s, %d shapes each, %d at"
        + " once%n", streams.size(), days, DurationText.format(settings.refreshEveryMillis()), DriftShape.values().length,
        Math.min(threads, streams.size()));
    for (DriftStream stream : streams) {
      out.printf(Locale.ROOT, "stream %s: about %,.0f baskets; planted:%n", stream.name(), stream.expectedBaskets());
      for (DriftPlant plant : stream.truth()) {
        out.println("    " + plant.pair().description());
      }
      long[] shift = stream.trafficShift();
      if (shift != null) {
        out.printf(Locale.ROOT, "    traffic_shift: %s .. %s at %.1f x the weekday traffic%n",
            Instant.ofEpochMilli(shift[0]), Instant.ofEpochMilli(shift[1]), DriftShape.SHIFTED_TRAFFIC);
      }
    }
    out.flush();
    ExecutorService pool = Executors.newFixedThreadPool(Math.min(threads, streams.size()));
    List<DriftScore> ours = new ArrayList<>();
    List<DriftScore> exact = new ArrayList<>();
    List<DriftScore> floored = new ArrayList<>();
    try {
      List<Future<StreamScores>> runs = new ArrayList<>();
      for (DriftStream stream : streams) {
        runs.add(pool.submit(() -> run(stream, settings, out, started)));
      }
      for (Future<StreamScores> run : runs) {
        StreamScores scores = run.get();
        ours.add(scores.ours());
        if (scores.exact() != null) {
          exact.add(scores.exact());
          floored.add(scores.floored());
        }
      }
    } finally {
      pool.shutdownNow();
    }
    DriftScore all = DriftScore.combine(ours);
    DriftScore reference = noReference ? null : DriftScore.combine(exact);
    DriftScore flooredReference = noReference ? null : DriftScore.combine(floored);
    printChanges(out, all, reference, flooredReference);
    if (flooredReference != null) {
      double ratio = all.medianDelayRatio(flooredReference, refreshMinutes);
      out.printf(Locale.ROOT, "  reference median delay %.0f min; held to the cohort floor (%.0f baskets) %.0f min,"
          + " pairpulse's median ratio to it %.2f%n", reference.medianDelayMinutes(), settings.cohortFloor(),
          flooredReference.medianDelayMinutes(), ratio);
    }
    out.printf(Locale.ROOT, "  %.1f s in all%n", seconds(started));
    out.println(resultLine(all, reference, refreshMinutes));
    out.flush();
    return 0;
  }

  /** Replays one stream through the backtest and the reference detector; prints as it goes (whole lines). */
  private StreamScores run(DriftStream stream, BacktestSettings settings, PrintWriter out, long started) {
    BacktestResult result = replay(stream, settings, out, started);
    DriftScore score = DriftScore.score(stream.name(), stream.truth(), result.alerts(), result.firstEventMillis(),
        result.lastEventMillis());
    print(out, String.format(Locale.ROOT, "  %s pairpulse: %,d baskets, %,d refreshes, %d alerts raised: %s; %.1f s",
        stream.name(), result.baskets(), result.refreshes(), score.alerts().size(), classes(score), seconds(started)));
    if (noReference) {
      return new StreamScores(score, null, null);
    }
    ExactDriftDetector.Settings exact = ExactDriftDetector.Settings.defaults();
    DriftScore referenceScore = reference(stream, exact, "exact", out, started);
    DriftScore flooredScore = reference(stream, exact.withCohortFloor((int) Math.ceil(settings.cohortFloor())),
        "exact, cohort floor", out, started);
    return new StreamScores(score, referenceScore, flooredScore);
  }

  /** The reference detector's score on one stream, with a progress line. */
  private static DriftScore reference(DriftStream stream, ExactDriftDetector.Settings exact, String label,
      PrintWriter out, long started) {
    ExactDriftDetector.Result reference = new ExactDriftDetector(exact).run(stream);
    DriftScore referenceScore = DriftScore.score(stream.name(), stream.truth(), reference.alerts(),
        reference.firstEventMillis(), reference.lastEventMillis());
    print(out, String.format(Locale.ROOT, "  %s %s: %,d pairs tested (>= %d occurrences), threshold G2 %.1f"
        + " (alpha %.2g), %d alarms: %s; %.1f s", stream.name(), label, reference.pairsTested(), exact.minPairCount(),
        reference.thresholdG2(), reference.testLevel(), reference.alarms().size(), classes(referenceScore),
        seconds(started)));
    return referenceScore;
  }

  private static void print(PrintWriter out, String line) {
    synchronized (out) {
      out.println(line);
      out.flush();
    }
  }

  private List<DriftStream> streams() {
    try {
      if (seeds < 1) {
        throw new IllegalArgumentException("--seeds must be >= 1, got " + seeds);
      }
      if (!(trafficScale > 0)) {
        throw new IllegalArgumentException("--traffic-scale must be > 0, got " + trafficScale);
      }
      List<TrafficLevel> traffic = new ArrayList<>();
      for (String name : levels) {
        traffic.add(TrafficLevel.named(name).scaled(trafficScale));
      }
      List<Long> seedList = new ArrayList<>();
      for (int i = 0; i < seeds; i++) {
        seedList.add(seed + (long) i * traffic.size());
      }
      return DriftFamily.streams(seedList, traffic, days);
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage(), e);
    }
  }

  BacktestSettings settings() throws IOException {
    BacktestSettings settings = BacktestSettings.builder().summaryEveryMillis(BacktestSettings.DAY_MILLIS).build();
    try {
      settings = SettingsFile.readOption(config, settings, bench.err(), "bench drift");
      return settings.toBuilder().refreshEveryMillis(refresh.millis()).evaluation(null).build();
    } catch (IllegalArgumentException e) {
      throw bench.usage(e.getMessage(), e);
    }
  }

  /** Replays one stream through the backtest, with one progress line per simulated day. */
  private static BacktestResult replay(DriftStream stream, BacktestSettings settings, PrintWriter out, long started) {
    Backtest backtest = new Backtest(settings, new Backtest.Listener() {
      private final SimulatedDays days = new SimulatedDays();

      @Override
      public void refreshed(long atMillis, PairTable table, FlooredTable floored, List<AlertEvent> events) {
        if (days.refreshed(atMillis, events)) {
          print(out, String.format(Locale.ROOT, "  %s %s  table v%d: %,d tracked pairs, %,d published; %d alerts"
              + " raised; %.1f s", stream.level().name(), Instant.ofEpochMilli(atMillis), table.version(),
              table.pairCount(), floored.publishedPairs(), days.raised(), seconds(started)));
        }
      }
    }, null);
    for (ReplayBasket basket : stream) {
      backtest.accept(basket);
    }
    return backtest.finish();
  }

  private static String classes(DriftScore score) {
    StringBuilder text = new StringBuilder();
    for (DriftScore.AlertClass alertClass : DriftScore.AlertClass.values()) {
      long count = score.count(alertClass);
      if (count > 0) {
        text.append(text.length() == 0 ? "" : ", ").append(count).append(' ').append(alertClass.wireName());
      }
    }
    return text.length() == 0 ? "none" : text.toString();
  }

  /**
   * One line per planted change: shape, level, change time, the delays (pairpulse's, the reference's, the reference's
   * held to the cohort floor), direction errors on the pair.
   */
  static void printChanges(PrintWriter out, DriftScore ours, DriftScore reference, DriftScore floored) {
    out.printf(Locale.ROOT, "  %-15s %-7s %-8s %-20s %12s %12s %12s  %s%n", "shape", "level", "kind", "change",
        "pairpulse", "exact", "exact_floor", "direction");
    for (DriftScore.Change change : ours.changes()) {
      DriftScore.Change other = reference == null ? null : DriftScore.find(reference.changes(), change);
      DriftScore.Change held = floored == null ? null : DriftScore.find(floored.changes(), change);
      String stream = change.stream();
      String level = stream.substring(0, stream.indexOf('/'));
      long errors = ours.directionErrors(stream, change.plant());
      out.printf(Locale.ROOT, "  %-15s %-7s %-8s %-20s %12s %12s %12s  %s%n", change.plant().shape().wireName(), level,
          change.plant().pair().kind().name().toLowerCase(Locale.ROOT), Instant.ofEpochMilli(change.changeMillis()),
          delay(change), other == null ? "NA" : delay(other), held == null ? "NA" : delay(held),
          errors == 0 ? "ok" : errors + " wrong-way alert(s)");
    }
    printFaults(out, "pairpulse", ours);
    if (reference != null) {
      printFaults(out, "exact", reference);
    }
    out.flush();
  }

  /** The raised alerts that count against a detector: false alerts, wrong-way alerts, bundle flaps. */
  private static void printFaults(PrintWriter out, String detector, DriftScore score) {
    for (DriftScore.ScoredAlert alert : score.alerts()) {
      DriftScore.AlertClass alertClass = alert.alertClass();
      if (alertClass == DriftScore.AlertClass.FALSE || alertClass == DriftScore.AlertClass.DIRECTION_ERROR
          || alertClass == DriftScore.AlertClass.BUNDLE_FLAP) {
        out.printf(Locale.ROOT, "  %s %s: %s %s %s on %s (%s)%n", detector, alertClass.wireName(), alert.stream(),
            Instant.ofEpochMilli(alert.alert().atMillis()), alert.alert().kind().wireName(), alert.alert().pair(),
            alert.shape() == null ? "background" : alert.shape().wireName());
      }
    }
  }

  private static String delay(DriftScore.Change change) {
    return change.detected() ? String.format(Locale.ROOT, "%.0f min", change.delayMinutes()) : "missed";
  }

  /** The RESULT line. */
  static String resultLine(DriftScore ours, DriftScore reference, double refreshMinutes) {
    double ratio = reference == null ? Double.NaN : ours.medianDelayRatio(reference, refreshMinutes);
    double delay = ours.medianDelayMinutes();
    double falseRate = ours.falseAlertsPerSimulatedDay();
    return String.format(Locale.ROOT, "RESULT drift changes=%d detected=%d/%d direction_errors=%d"
        + " delay_ratio_vs_exact_median=%s delay_sim_minutes_median=%s false_alerts_per_sim_day=%s bundle_flaps=%d",
        ours.changes().size(), ours.detected(), ours.changes().size(), ours.directionErrors(),
        Double.isNaN(ratio) ? "NA" : String.format(Locale.ROOT, "%.2f", ratio),
        Double.isNaN(delay) ? "NA" : Long.toString(Math.round(delay)),
        Double.isNaN(falseRate) ? "NA" : String.format(Locale.ROOT, "%.3f", falseRate), ours.bundleFlaps());
  }

  private static double seconds(long startedNanos) {
    return (System.nanoTime() - startedNanos) / 1e9;
  }
}
