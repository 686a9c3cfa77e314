package org.pairpulse.ops.analysis.terminal;

import java.io.PrintWriter;
import java.nio.charset.Charset;

/**
 * The one live progress line of the commands (demo, backtest, report): on a terminal one line redrawn in place
 * ({@code \r}, cleared to its end), with messages printed above it; elsewhere (a log, a pipe) one line per update,
 * so that logs stay readable. What the line says is the caller's: {@link FileProgress} for files read, the demo's
 * own text for the demo. Not thread-safe: one writer.
 */
public final class ProgressLine {
  private final PrintWriter out;
  private final boolean inPlace;
  private String current = "";
  private boolean printed;

  /**
   * @param out where the line goes (flushed after every call)
   * @param inPlace redraw one line in place (a terminal) rather than print a line per update
   */
  public ProgressLine(PrintWriter out, boolean inPlace) {
    this.out = out;
    this.inPlace = inPlace;
  }

  /** A line on standard error: in place when the process has a terminal ({@link System#console()}). */
  public static ProgressLine onStandardError() {
    return new ProgressLine(new PrintWriter(new java.io.OutputStreamWriter(System.err, Charset.defaultCharset()), true),
        isTerminal());
  }

  /** Whether the process runs on a terminal (then lines are redrawn in place). */
  public static boolean isTerminal() {
    return System.console() != null;
  }

  /** Whether the line is redrawn in place. */
  public boolean inPlace() {
    return inPlace;
  }

  /** A message on its own line (the progress line, if any, is redrawn below it). */
  public void message(String text) {
    if (inPlace) {
      out.print("\r\033[K" + text + "\n" + current);
    } else {
      out.println(text);
    }
    out.flush();
    printed = true;
  }

  /** The progress line now reads {@code line}. */
  public void progress(String line) {
    if (inPlace) {
      current = line;
      out.print("\r\033[K" + line);
    } else {
      out.println(line);
    }
    out.flush();
    printed = true;
  }

  /** Ends the in-place line (the next output starts on a line of its own). */
  public void end() {
    if (inPlace && !current.isEmpty()) {
      out.println();
      current = "";
    }
    out.flush();
  }

  /** True once something was printed. */
  public boolean printed() {
    return printed;
  }
}
