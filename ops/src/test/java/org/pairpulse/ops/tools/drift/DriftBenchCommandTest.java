package org.pairpulse.ops.tools.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.MainTestAccess;

/** {@code pairpulse bench drift} on a tiny run: progress, the per-change table, then the RESULT line, last. */
class DriftBenchCommandTest {
  static final Pattern RESULT = Pattern.compile("RESULT drift changes=(\\d+) detected=\\d+/(\\d+) direction_errors=\\d+"
      + " delay_ratio_vs_exact_median=(\\d+\\.\\d{2}|NA) delay_sim_minutes_median=(\\d+|NA)"
      + " false_alerts_per_sim_day=\\d+\\.\\d{3} bundle_flaps=\\d+");

  @TempDir
  Path directory;

  @Test
  void printsProgressTheChangesThenTheResultLineLast() throws Exception {
    Files.writeString(directory.resolve("small.properties"),
        "engine.tracked.pair.capacity=512\nengine.tracked.item.capacity=512\nserve.cohort.floor=5\n");
    MainTestAccess.Run run = MainTestAccess.run("bench", "drift", "--days", "3", "--levels", "quiet",
        "--traffic-scale", "0.05", "--refresh-every", "1h", "--config", directory.resolve("small.properties").toString());
    assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
    String text = run.out();
    String[] lines = text.strip().split("\n");
    String last = lines[lines.length - 1];
    var matcher = RESULT.matcher(last);
    assertTrue(matcher.matches(), last);
    // within 3 days: the sudden (day 2 20:00) and gradual (day 2 08:00) emerging changes
    assertEquals("2", matcher.group(1), text);
    assertEquals("2", matcher.group(2));
    assertTrue(text.contains("bench drift: 1 stream(s) of 3 simulated days"), text);
    assertTrue(text.contains("quietx0.05 2026-06-02T00:00:00Z  table v"), "one progress line per simulated day: " + text);
    assertTrue(text.contains("exact:"), "the reference detector ran: " + text);
    assertTrue(Pattern.compile("(?m)^  gradual +quietx0.05 +emerging +2026-06-03T08:00:00Z ").matcher(text).find(),
        text);
  }
}
