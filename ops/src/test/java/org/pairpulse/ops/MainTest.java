package org.pairpulse.ops;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.MainTestAccess.Run;

/** The command line parses, helps, and rejects bad input with a clear message and exit code 2. */
class MainTest {
  static Run run(String... args) {
    return MainTestAccess.run(args);
  }

  @Test
  void helpListsTheCommandsAndExitsZero() {
    Run run = run("--help");
    assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
    assertTrue(run.out().startsWith("Usage: pairpulse"), run.out());
    assertTrue(run.out().contains("bench"), run.out());
    assertTrue(run.out().contains("Exit codes:"), run.out());
  }

  @Test
  void helpCommandShowsACommandsUsage() {
    Run run = run("help", "backtest");
    assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
    assertTrue(run.out().startsWith("Usage: pairpulse backtest"), run.out());
  }

  @Test
  void versionNamesTheProgram() {
    Run run = run("--version");
    assertEquals(Main.EXIT_OK, run.exitCode());
    assertTrue(run.out().startsWith("pairpulse "), run.out());
  }

  @Test
  void benchSketchHelpDescribesTheResultLine() {
    Run run = run("bench", "sketch", "--help");
    assertEquals(Main.EXIT_OK, run.exitCode());
    assertTrue(run.out().startsWith("Usage: pairpulse bench sketch"), run.out());
    assertTrue(run.out().contains("RESULT sketch pairs_per_s=<n>"), run.out());
  }

  @ParameterizedTest(name = "[{index}] {0}")
  @CsvSource(delimiter = '|', value = {
      "''                                    | pairpulse: missing command: choose one of bench",
      "bench                                 | pairpulse bench: missing command: choose one of sketch",
      "--bogus                               | pairpulse: Unknown option: '--bogus'",
      "bench sketch --seeed 3                | Possible solutions: --seed",
      "bench sketchy                         | pairpulse bench: Unmatched argument at index 1: 'sketchy'",
      "bench sketch --top x                  | pairpulse bench sketch: Invalid value for option '--top': 'x' is not an int",
      "bench sketch --top 0                  | pairpulse bench sketch: --top must be >= 1, got 0",
      "bench sketch --support-floor 1.5      | pairpulse bench sketch: --support-floor must be in (0, 1), got 1.5",
      "bench sketch --forks -1               | pairpulse bench sketch: --forks must be >= 0, got -1",
      "bench sketch --fork-heap lots         | pairpulse bench sketch: --fork-heap must be a size such as 2g or 1536m, got 'lots'",
      "bench sketch --drifting-share 2       | pairpulse bench sketch: --drifting-share must be in [0, 1], got 2.0",
      "bench sketch --catalog-items 30 --planted-pairs 400 | pairpulse bench sketch: planted pairs must be in 0..225"})
  void rejectsBadInputWithAClearMessageAndExitCode2(String commandLine, String expectedMessage) {
    MainTestAccess.assertUsageError(commandLine, expectedMessage);
  }

  @Test
  void usageErrorsPointToTheHelp() {
    Run run = run("bench", "sketch", "--top", "0");
    assertTrue(run.err().contains("Try 'pairpulse bench sketch --help' for more information."), run.err());
  }
}
