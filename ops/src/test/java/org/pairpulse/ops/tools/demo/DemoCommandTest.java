package org.pairpulse.ops.tools.demo;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.pairpulse.ops.MainTestAccess;

/** {@code pairpulse demo}'s command line, and a clean stop on SIGTERM in a process of its own. */
class DemoCommandTest {
  @ParameterizedTest(name = "[{index}] {0}")
  @CsvSource(delimiter = '|', value = {
      "demo --speed 0                           | pairpulse demo: --speed must be in (0, 100000] simulated minutes per second, got 0.0",
      "demo --sim-day-seconds 60 --speed 24     | are mutually exclusive",
      "demo --duration 2w                       | pairpulse demo: --duration must be simulated time such as 6d, 36h or 90m, or 'forever', got '2w'",
      "demo --duration 30m                      | pairpulse demo: --duration must be between 1h and 366d, got '30m'",
      "demo --fast-forward 7d                   | pairpulse demo: --fast-forward must be shorter than --duration, got 7d and 6d",
      "demo --port 70000                        | pairpulse demo: --port must be in 0..65535, got 70000",
      "demo --rate 0                            | pairpulse demo: --rate must be in (0, 100000], got 0.0",
      "demo --partitions 0                      | pairpulse demo: --partitions must be in 1..64, got 0"})
  void rejectsBadOptionsWithAClearMessageAndExitCode2(String commandLine, String expected) {
    MainTestAccess.assertUsageError(commandLine, expected);
  }

  @Test
  void settingsFollowTheOptions() {
    DemoCommand command = new DemoCommand();
    picocli.CommandLine line = new picocli.CommandLine(command);
    line.parseArgs("--sim-day-seconds", "30", "--duration", "36h", "--fast-forward", "1d", "--port", "0", "--seed", "7",
        "--rate", "25");
    DemoSettings s = command.settings();
    assertEquals(30.0, s.simDaySeconds(), 1e-9);
    assertEquals(36 * 3_600_000L, s.durationSimMillis());
    assertEquals(DemoSettings.DAY_MILLIS, s.fastForwardSimMillis());
    assertEquals(7, s.seed());
    assertEquals(25.0, s.basketsPerMinute());
    assertEquals(0, s.port());
    line.parseArgs("--speed", "48", "--duration", "forever");
    s = command.settings();
    assertEquals(30.0, s.simDaySeconds(), 1e-9, "48 simulated minutes a second: a day in 30 s");
    assertEquals(DemoSettings.FOREVER, s.durationSimMillis());
  }

  /**
   * The demo in a JVM of its own, stopped by SIGTERM as Ctrl-C or a service manager would: everything
   * closes in order and the process exits 0. The signal goes through the process handle:
   * {@link Process#destroy()} also closes this end of the child's output pipe, so the child's last lines
   * (the ones checked here) would be lost.
   */
  @Test
  void sigtermStopsTheDemoCleanlyWithExitCode0() throws Exception {
    String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
    Process process = new ProcessBuilder(java, "-Xmx768m", "-cp", System.getProperty("java.class.path"),
        "org.pairpulse.ops.Main", "demo", "--port", "0", "--duration", "forever")
        .redirectErrorStream(true).start();
    List<String> lines = new ArrayList<>();
    CompletableFuture<Boolean> ready = new CompletableFuture<>();
    Thread reader = new Thread(() -> {
      try (BufferedReader in = new BufferedReader(new InputStreamReader(process.getInputStream(), StandardCharsets.UTF_8))) {
        String line;
        while ((line = in.readLine()) != null) {
          synchronized (lines) {
            lines.add(line);
          }
          if (line.startsWith("sim day")) {
            ready.complete(true); // playing: the first progress line
          }
        }
      } catch (IOException e) {
        ready.completeExceptionally(e);
      }
      ready.complete(false);
    });
    reader.start();
    try {
      boolean started = ready.get(120, TimeUnit.SECONDS);
      assertTrue(started, () -> "the demo did not start (exit " + (process.isAlive() ? "-" : process.exitValue())
          + "): " + output(lines));
      assertTrue(process.toHandle().destroy(), "SIGTERM not sent");
      assertTrue(process.waitFor(90, TimeUnit.SECONDS), "the demo did not stop within 90 s");
      reader.join(10_000);
      String out = output(lines);
      assertEquals(0, process.exitValue(), out);
      assertTrue(out.contains("stopping: scenario, ingest (final checkpoint), server, broker"), out);
      assertTrue(out.contains("stopped cleanly"), out);
    } finally {
      process.destroyForcibly();
    }
  }

  private static String output(List<String> lines) {
    synchronized (lines) {
      return String.join("\n", lines);
    }
  }
}
