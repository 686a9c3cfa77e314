package org.pairpulse.ops.tools.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.Main;
import picocli.CommandLine;

/**
 * {@code pairpulse bench ingest} on a tiny run against the real in-process broker: the steps in order, the
 * RESULT line last in its exact format with a ratio that is its own two rates' quotient, and a state that does
 * not grow over the longer stream. No speed is asserted (speeds live in the benchmark's own run).
 */
class IngestBenchTest {
  static final Pattern RESULT = Pattern.compile("RESULT ingest baskets_per_s=(\\d+) bare_records_per_s=(\\d+)"
      + " decode_records_per_s=(\\d+) ratio=(\\d+\\.\\d{3}) state_bytes=(\\d+)");
  static final Pattern LONG = Pattern.compile("long stream: after ([\\d,]+) baskets \\(([\\d.]+)x.*state ([\\d,]+) bytes"
      + " \\(before ([\\d,]+)\\)");

  @Test
  void runsEveryStepAndPrintsTheResultLineLast() {
    ByteArrayOutputStream captured = new ByteArrayOutputStream();
    PrintStream original = System.out;
    StringWriter err = new StringWriter();
    int exit;
    System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
    try {
      CommandLine cli = Main.commandLine();
      cli.setErr(new PrintWriter(err, true));
      exit = cli.execute("bench", "ingest", "--baskets", "20000", "--partitions", "2", "--stage-baskets", "4000",
          "--long-factor", "2", "--long-seconds", "120");
    } finally {
      System.setOut(original);
    }
    String out = captured.toString(StandardCharsets.UTF_8);
    assertEquals(Main.EXIT_OK, exit, err + "\n" + out);
    String[] lines = out.strip().split("\n");
    Matcher result = RESULT.matcher(lines[lines.length - 1]);
    assertTrue(result.matches(), lines[lines.length - 1]);
    double baskets = Double.parseDouble(result.group(1));
    double bare = Double.parseDouble(result.group(2));
    assertTrue(baskets > 0 && bare > 0 && Double.parseDouble(result.group(3)) > 0, result.group());
    assertEquals(baskets / bare, Double.parseDouble(result.group(4)), 0.0015, "ratio = baskets_per_s / bare_records_per_s");
    for (String step : new String[] {"bare consumer:", "poll + decode:", "full ingest path (engine.threads=2):", "per basket, one thread",
        "long stream: after 20,000 baskets"}) {
      assertTrue(out.contains(step), "step '" + step + "' in\n" + out);
    }
    Matcher longStream = LONG.matcher(out);
    assertTrue(longStream.find(), out);
    assertEquals("40,000", longStream.group(1), "the whole longer stream ran");
    double after = Double.parseDouble(longStream.group(3).replace(",", ""));
    double before = Double.parseDouble(longStream.group(4).replace(",", ""));
    assertTrue(Math.abs(after - before) <= 0.01 * before, "state bytes stay fixed: " + before + " -> " + after);
  }
}
