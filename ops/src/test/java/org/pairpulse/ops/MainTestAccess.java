package org.pairpulse.ops;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.PrintWriter;
import java.io.StringWriter;
import picocli.CommandLine;

/** Runs the CLI in this JVM with captured output: the one helper every command's test uses. */
public final class MainTestAccess {
  private MainTestAccess() {}

  /** What one run of the CLI printed and returned. */
  public record Run(int exitCode, String out, String err) {}

  /** {@code pairpulse args...} through {@link Main#commandLine()}, as the launcher runs it, without exiting. */
  public static Run run(String... args) {
    StringWriter out = new StringWriter();
    StringWriter err = new StringWriter();
    CommandLine commandLine = Main.commandLine();
    commandLine.setOut(new PrintWriter(out, true));
    commandLine.setErr(new PrintWriter(err, true));
    int exitCode = commandLine.execute(args);
    return new Run(exitCode, out.toString(), err.toString());
  }

  /**
   * The usage-error contract: {@code commandLine} (split at blanks; blank for no arguments) exits with
   * {@link Main#EXIT_USAGE} and a message containing {@code expectedMessage}, on stderr only.
   */
  public static void assertUsageError(String commandLine, String expectedMessage) {
    String[] args = commandLine.isBlank() ? new String[0] : commandLine.trim().split("\\s+");
    Run run = run(args);
    assertEquals(Main.EXIT_USAGE, run.exitCode(), run.err());
    assertTrue(run.err().contains(expectedMessage), () -> "stderr was:\n" + run.err());
    assertEquals("", run.out(), "usage errors go to stderr only");
  }
}
