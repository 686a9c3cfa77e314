package org.pairpulse.ops.tools.demo;

import java.io.PrintWriter;
import java.time.Duration;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.analysis.terminal.ProgressLine;
import org.pairpulse.serve.drift.AlertKind;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/**
 * {@code pairpulse demo}: the whole system on this machine with invented data ({@link Demo}), a live
 * progress line, and a summary of what was detected.
 */
@Command(name = "demo", mixinStandardHelpOptions = true, sortOptions = false,
    description = {
        "Runs pairpulse on this machine with invented data: an in-process Kafka broker, the Kestrel Connect"
            + " scenario on an accelerated clock, ingest and the server with its dashboard.",
        "The planted emerging pair (pack-esports + boost-lowlatency-5gb, from 12:00 of simulated day 3, when a"
            + " popular online game opens a new season) is alerted during the default run. Ctrl-C stops everything"
            + " cleanly."},
    footer = {"", "The demo scales two horizons to its few simulated days: recent has a half-life of 2 simulated"
        + " hours, baseline is a 7-day window (see README-ops-run.md)."})
public final class DemoCommand implements Callable<Integer> {
  private static final Pattern DURATION = Pattern.compile("(\\d+(?:\\.\\d+)?)\\s*(d|h|m|min)?");

  @Spec
  CommandSpec spec;

  static final class Speed {
    @Option(names = "--sim-day-seconds", paramLabel = "N",
        description = "Wall-clock seconds per simulated day (default: 60).")
    Double simDaySeconds;

    @Option(names = "--speed", paramLabel = "SIM_MINUTES_PER_SECOND",
        description = "Simulated minutes per wall-clock second (24 is one simulated day a minute).")
    Double simMinutesPerSecond;
  }

  @ArgGroup(exclusive = true, multiplicity = "0..1")
  Speed speed;

  @Option(names = "--duration", paramLabel = "SIM_TIME", defaultValue = "6d",
      description = "Simulated time to play: 6d, 36h, 90m, or 'forever' (until Ctrl-C). Default: ${DEFAULT-VALUE}"
          + " (past the planted emerging pairs of day 3 and the fading pair of day 5).")
  String duration;

  @Option(names = "--fast-forward", paramLabel = "SIM_TIME", defaultValue = "0",
      description = "Simulated time from day 0 to send at once (a backfill) before the clock starts, e.g. 3d to"
          + " reach the day of the emerging pairs at once. Default: none.")
  String fastForward;

  @Option(names = "--port", defaultValue = "8470", description = "HTTP port of the dashboard and API on 127.0.0.1"
      + " (0: any free port). Default: ${DEFAULT-VALUE}.")
  int port;

  @Option(names = "--seed", description = "Scenario seed (same seed, same baskets). Default: the scenario's.")
  Long seed;

  @Option(names = "--rate", paramLabel = "BASKETS_PER_SIM_MINUTE",
      description = "Mean baskets per simulated minute. Default: " + (int) DemoSettings.DEFAULT_BASKETS_PER_MINUTE + ".")
  Double rate;

  @Option(names = "--partitions", description = "Partitions of the basket topic. Default: "
      + DemoSettings.DEFAULT_PARTITIONS + ".")
  Integer partitions;

  @Option(names = "--verbose", description = "Show the components' informational log lines.")
  boolean verbose;

  @Override
  public Integer call() throws Exception {
    DemoSettings settings = settings();
    if (!verbose) {
      quietLogs();
    }
    PrintWriter out = spec.commandLine().getOut();
    boolean terminal = ProgressLine.isTerminal();
    CountDownLatch finished = new CountDownLatch(1);
    Stop stop = new Stop();
    Thread hook = new Thread(() -> {
      stop.requested = true;
      boolean clean = false;
      try {
        clean = finished.await(60, TimeUnit.SECONDS);
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
      out.flush();
      Runtime.getRuntime().halt(clean ? 0 : 1); // the main thread closed everything: exit 0, not 130
    }, "pairpulse-demo-shutdown");
    Runtime.getRuntime().addShutdownHook(hook);
    try {
      out.printf(Locale.ROOT, "pairpulse demo: starting an in-process Kafka broker, ingest and the server ...%n");
      out.flush();
      Demo demo;
      try {
        demo = Demo.start(settings);
      } catch (IllegalStateException e) {
        throw new IllegalStateException(e.getMessage() + (settings.port() != 0
            ? " (is port " + settings.port() + " in use? try --port 0 for any free port)" : ""), e);
      }
      try {
        return play(demo, settings, out, terminal, stop);
      } finally {
        if (stop.requested) {
          out.printf(Locale.ROOT, "%nstopping: scenario, ingest (final checkpoint), server, broker ...%n");
          out.flush();
        }
        demo.close();
        if (stop.requested) {
          out.printf(Locale.ROOT, "stopped cleanly%n");
          out.flush();
        }
      }
    } finally {
      finished.countDown();
      try {
        Runtime.getRuntime().removeShutdownHook(hook);
      } catch (IllegalStateException e) {
        // the JVM is shutting down: the hook is running and waits for the close above
      }
    }
  }

  /** Set by the shutdown hook. */
  private static final class Stop {
    volatile boolean requested;
  }

  private int play(Demo demo, DemoSettings settings, PrintWriter out, boolean terminal, Stop stop)
      throws InterruptedException {
    ProgressLine line = new ProgressLine(out, terminal);
    line.message(String.format(Locale.ROOT, "ready after %.1f s; dashboard: %s   (API %sapi/v1/status, metrics %smetrics)",
        demo.readyWallMillis() / 1000.0, demo.dashboard(), demo.dashboard(), demo.dashboard()));
    line.message(String.format(Locale.ROOT,
        "playing Kestrel Connect (invented data): %s, one simulated day per %s s, %s baskets per simulated minute%s;"
            + " Ctrl-C stops", describe(settings), trim(settings.simDaySeconds()), trim(settings.basketsPerMinute()),
        settings.fastForwardSimMillis() == 0 ? "" : ", the first " + DemoProgressText.simDuration(settings.fastForwardSimMillis())
            + " sent at once"));
    long printEvery = terminal ? 1000 : 5000;
    long lastPrint = -printEvery;
    int reported = 0;
    boolean rulesReported = false;
    while (!stop.requested && !demo.finishedSending()) {
      demo.poll();
      if (!rulesReported && demo.firstRulesWallMillis() >= 0) {
        rulesReported = true;
        Demo.Progress p = demo.progress();
        line.message(String.format(Locale.ROOT, "first rules after %.1f s (%,d published pairs at simulated %s)",
            demo.firstRulesWallMillis() / 1000.0, p.rules(), DemoProgressText.simTime(p.watermarkMillis(), p.simStartMillis())));
      }
      reported = reportDetections(demo, line, reported);
      if (demo.pipeline().failure() != null) {
        line.message("ingest stopped on an error: " + demo.pipeline().failure());
        return 1;
      }
      if (demo.wallMillis() - lastPrint >= printEvery) {
        lastPrint = demo.wallMillis();
        line.progress(DemoProgressText.format(demo.progress()));
      }
      Thread.sleep(250); // the progress loop: milestones within a quarter second
    }
    if (stop.requested) {
      return 0;
    }
    boolean played = demo.awaitPlayed(Duration.ofSeconds(60));
    reportDetections(demo, line, reported);
    line.progress(DemoProgressText.format(demo.progress()));
    line.end();
    summary(demo, out, played);
    return 0;
  }

  private static int reportDetections(Demo demo, ProgressLine line, int reported) {
    var detections = demo.detections();
    for (int i = reported; i < detections.size(); i++) {
      Demo.Detection d = detections.get(i);
      line.message(String.format(Locale.ROOT, "alert: %s %s + %s at simulated %s, %.0f simulated minutes after the"
              + " planted change (%.1f s after the start)", d.alert().kind().wireName(), d.planted().items().get(0),
          d.planted().items().get(1), DemoProgressText.simTime(d.alert().atMillis(), demo.settings().scenario().startMillis()),
          d.delaySimMinutes(), d.wallMillisSinceStart() / 1000.0));
    }
    return detections.size();
  }

  private static void summary(Demo demo, PrintWriter out, boolean played) {
    Demo.Progress p = demo.progress();
    out.printf(Locale.ROOT, "%nsummary: %,d baskets in %.0f s; first rules after %s; alerts raised: %s%n", p.baskets(),
        p.wallMillis() / 1000.0, demo.firstRulesWallMillis() < 0 ? "(none)"
            : String.format(Locale.ROOT, "%.1f s", demo.firstRulesWallMillis() / 1000.0), alerts(p.alertsRaised()));
    for (var planted : demo.expectedAlerts()) {
      var found = demo.detections().stream().filter(d -> d.planted().equals(planted)).findFirst();
      out.printf(Locale.ROOT, "  planted %-8s %s + %s: %s%n", planted.kind().name().toLowerCase(Locale.ROOT),
          planted.items().get(0), planted.items().get(1), found.isPresent()
              ? String.format(Locale.ROOT, "alerted %.0f simulated minutes after the change", found.get().delaySimMinutes())
              : "not alerted");
    }
    if (!played) {
      out.printf(Locale.ROOT, "  (ingest had not counted every basket within 60 s of the end)%n");
    }
    out.flush();
  }

  static String alerts(Map<AlertKind, Integer> raised) {
    if (raised.isEmpty()) {
      return "none";
    }
    StringBuilder s = new StringBuilder();
    for (AlertKind kind : AlertKind.values()) {
      Integer n = raised.get(kind);
      if (n != null) {
        s.append(s.length() == 0 ? "" : ", ").append(kind.wireName()).append(' ').append(n);
      }
    }
    return s.toString();
  }

  private static String describe(DemoSettings settings) {
    return settings.durationSimMillis() == DemoSettings.FOREVER ? "until Ctrl-C"
        : DemoProgressText.simDuration(settings.durationSimMillis()) + " of simulated time";
  }

  private static String trim(double value) {
    return value == Math.rint(value) ? Long.toString((long) value) : String.format(Locale.ROOT, "%.2f", value);
  }

  DemoSettings settings() {
    DemoSettings.Builder s = DemoSettings.builder();
    if (speed != null && speed.simDaySeconds != null) {
      if (!(speed.simDaySeconds >= 0.01 && speed.simDaySeconds <= 86_400)) {
        throw usage("--sim-day-seconds must be in 0.01..86400, got " + speed.simDaySeconds);
      }
      s.speed(DemoSettings.DAY_MILLIS / (speed.simDaySeconds * 1000));
    } else if (speed != null && speed.simMinutesPerSecond != null) {
      if (!(speed.simMinutesPerSecond > 0 && speed.simMinutesPerSecond <= 100_000)) {
        throw usage("--speed must be in (0, 100000] simulated minutes per second, got " + speed.simMinutesPerSecond);
      }
      s.speed(speed.simMinutesPerSecond * 60_000 / 1000);
    }
    long simMillis = parseDuration(duration);
    s.durationSimMillis(simMillis);
    long skip = fastForward.trim().equals("0") ? 0 : parseDuration("--fast-forward", fastForward);
    if (skip >= simMillis) {
      throw usage("--fast-forward must be shorter than --duration, got " + fastForward + " and " + duration);
    }
    s.fastForwardSimMillis(skip);
    if (port < 0 || port > 65535) {
      throw usage("--port must be in 0..65535, got " + port);
    }
    s.port(port);
    if (seed != null) {
      s.seed(seed);
    }
    if (rate != null) {
      if (!(rate > 0 && rate <= ScenarioConfig.MAX_BASKETS_PER_MINUTE)) {
        throw usage("--rate must be in (0, " + (long) ScenarioConfig.MAX_BASKETS_PER_MINUTE + "], got " + rate);
      }
      s.basketsPerMinute(rate);
    }
    if (partitions != null) {
      if (partitions < 1 || partitions > 64) {
        throw usage("--partitions must be in 1..64, got " + partitions);
      }
      s.partitions(partitions);
    }
    return s.build();
  }

  private long parseDuration(String text) {
    if (text.trim().equalsIgnoreCase("forever")) {
      return DemoSettings.FOREVER;
    }
    return parseDuration("--duration", text);
  }

  private long parseDuration(String option, String text) {
    String t = text.trim().toLowerCase(Locale.ROOT);
    Matcher m = DURATION.matcher(t);
    if (!m.matches()) {
      throw usage(option + " must be simulated time such as 6d, 36h or 90m" + (option.equals("--duration")
          ? ", or 'forever'" : "") + ", got '" + text + "'");
    }
    double value = Double.parseDouble(m.group(1));
    String unit = m.group(2) == null ? "d" : m.group(2);
    long millis = (long) (value * switch (unit) {
      case "d" -> DemoSettings.DAY_MILLIS;
      case "h" -> Duration.ofHours(1).toMillis();
      default -> Duration.ofMinutes(1).toMillis();
    });
    long max = ScenarioConfig.MAX_DURATION_DAYS * DemoSettings.DAY_MILLIS;
    if (millis < Duration.ofHours(1).toMillis() || millis > max) {
      throw usage(option + " must be between 1h and " + ScenarioConfig.MAX_DURATION_DAYS + "d, got '" + text + "'");
    }
    return millis;
  }

  private ParameterException usage(String message) {
    return new ParameterException(spec.commandLine(), message);
  }

  /** Warnings only, unless --verbose: the progress line is the demo's voice. */
  private static void quietLogs() {
    setIfAbsent("org.slf4j.simpleLogger.showDateTime", "false");
    setIfAbsent("org.slf4j.simpleLogger.log.org.pairpulse", "warn");
    setIfAbsent("org.slf4j.simpleLogger.log.org.apache.kafka", "error");
    setIfAbsent("org.slf4j.simpleLogger.log.kafka", "error");
    setIfAbsent("org.slf4j.simpleLogger.log.state.change.logger", "error");
    setIfAbsent("org.slf4j.simpleLogger.log.io.javalin", "warn");
    setIfAbsent("org.slf4j.simpleLogger.log.org.eclipse.jetty", "warn");
  }

  private static void setIfAbsent(String key, String value) {
    if (System.getProperty(key) == null) {
      System.setProperty(key, value);
    }
  }
}
