package org.pairpulse.ops.tools.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.MainTestAccess;

/**
 * End to end on a small configuration (in-process JMH with one short iteration, a 200k-pair accuracy
 * stream): the run succeeds and its last line is the RESULT line in the exact published format.
 */
class SketchBenchCommandTest {
  /** The published format, written out here so that a change to it breaks this test. */
  static final Pattern RESULT = Pattern.compile("^RESULT sketch pairs_per_s=\\d+ cms_ratio_vs_streamlib=\\d+(\\.\\d+)?"
      + " recall_at_100=\\d+(\\.\\d+)? lift_rel_err_p95=\\d+(\\.\\d+)? state_bytes=\\d+ exact_bytes=\\d+$");

  /** {@code bench sketch} with one unforked JMH measurement iteration and no warm-up, then these options. */
  private static MainTestAccess.Run inThisJvm(String... options) {
    List<String> args = new ArrayList<>(List.of("bench", "sketch", "--forks", "0", "--warmup-iterations", "0",
        "--measurement-iterations", "1"));
    args.addAll(List.of(options));
    return MainTestAccess.run(args.toArray(String[]::new));
  }

  @Test
  void smallRunEndsWithOneResultLineInTheExactFormat() {
    MainTestAccess.Run run = inThisJvm("--iteration-millis", "200", "--stream-baskets", "20000", "--catalog-items", "2000",
        "--pair-occurrences", "200000", "--planted-pairs", "150", "--seed", "7");
    assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
    List<String> lines = Arrays.asList(run.out().split("\\R"));
    String last = lines.get(lines.size() - 1);
    assertTrue(RESULT.matcher(last).matches(), "last line: " + last);
    assertTrue(SketchBenchResult.LINE.matcher(last).matches(), "the class's own pattern agrees: " + last);
    assertEquals(1, lines.stream().filter(line -> line.startsWith("RESULT")).count(), "exactly one RESULT line");
    for (String phase : List.of("phase 1/3 throughput:", "phase 2/3 count-min:", "phase 3/3 accuracy:", "accuracy recent:",
        "accuracy day:", "accuracy baseline:")) {
      assertTrue(lines.stream().anyMatch(line -> line.contains(phase)), "progress line '" + phase + "' missing");
    }
  }

  @Test
  void aFailingRunSaysWhyAndExitsWith1() {
    MainTestAccess.Run run = inThisJvm("--iteration-millis", "10", "--stream-baskets", "1000", "--catalog-items", "2000",
        "--pair-occurrences", "20000", "--planted-pairs", "10", "--support-floor", "0.9");
    assertEquals(Main.EXIT_FAILED, run.exitCode(), run.err());
    assertTrue(run.err().contains("pairpulse bench sketch: failed: no pair of horizon"), run.err());
    assertTrue(run.err().contains("lower --support-floor"), run.err());
    assertTrue(run.out().lines().noneMatch(line -> line.startsWith("RESULT")), "no RESULT line after a failure");
  }

  @Test
  void resultLineFormatsEveryField() {
    String line = new SketchBenchResult(2_345_678.4, 13.08251, 100, 0.59, 0.036912, 29_604_494, 132_785_408).line();
    assertEquals("RESULT sketch pairs_per_s=2345678 cms_ratio_vs_streamlib=13.083 recall_at_100=0.590"
        + " lift_rel_err_p95=0.0369 state_bytes=29604494 exact_bytes=132785408", line);
    assertTrue(RESULT.matcher(line).matches());
  }
}
