package org.pairpulse.ingest.file;

import java.io.PrintStream;
import java.util.Locale;
import org.pairpulse.sketch.time.EventClock;

/**
 * A progress line for long files: percent of bytes, lines and their rate, baskets, dead letters and the
 * time left. On a terminal the line is redrawn in place ({@code \r}); otherwise a new line is printed at
 * each interval, so that logs stay readable. Prints at most once per {@code intervalMillis}.
 */
public final class ProgressDisplay {
  private final PrintStream out;
  private final EventClock clock;
  private final String name;
  private final long totalBytes;
  private final boolean inPlace;
  private final long intervalMillis;
  private final long startMillis;
  private long lastPrintMillis;
  private boolean printed;

  public ProgressDisplay(PrintStream out, EventClock clock, String name, long totalBytes, boolean inPlace, long intervalMillis) {
    this.out = out;
    this.clock = clock;
    this.name = name;
    this.totalBytes = totalBytes;
    this.inPlace = inPlace;
    this.intervalMillis = intervalMillis;
    this.startMillis = clock.millis();
    this.lastPrintMillis = startMillis;
  }

  /** A display on standard error: in place on a terminal, one line every 5 s otherwise. */
  public static ProgressDisplay onStandardError(String name, long totalBytes) {
    boolean terminal = System.console() != null;
    return new ProgressDisplay(System.err, EventClock.system(), name, totalBytes, terminal, terminal ? 500 : 5000);
  }

  /** Reports progress; prints if the interval has passed. */
  public void update(long bytesRead, long lines, long baskets, long deadLetters) {
    long now = clock.millis();
    if (now - lastPrintMillis >= intervalMillis) {
      lastPrintMillis = now;
      print(now, bytesRead, lines, baskets, deadLetters, false);
    }
  }

  /** The final line. */
  public void finish(long bytesRead, long lines, long baskets, long deadLetters) {
    print(clock.millis(), bytesRead, lines, baskets, deadLetters, true);
  }

  private void print(long now, long bytesRead, long lines, long baskets, long deadLetters, boolean last) {
    double seconds = Math.max(1, now - startMillis) / 1000.0;
    double fraction = totalBytes > 0 ? Math.min(1.0, (double) bytesRead / totalBytes) : 0;
    String eta = fraction > 0 && !last ? " eta " + duration((long) (seconds * (1 - fraction) / fraction)) : "";
    String line = String.format(Locale.ROOT, "%s %5.1f%% %s/%s  %,d lines (%,.0f/s)  %,d baskets  %,d dead letters%s%s",
        name, fraction * 100, bytes(bytesRead), bytes(totalBytes), lines, lines / seconds, baskets, deadLetters,
        last ? " in " + duration((long) seconds) : "", eta);
    if (inPlace) {
      out.print("\r" + line + (last ? "\n" : ""));
    } else {
      out.println(line);
    }
    out.flush();
    printed = true;
  }

  /** True once something was printed. */
  public boolean printed() {
    return printed;
  }

  private static String bytes(long n) {
    if (n < 1 << 20) {
      return String.format(Locale.ROOT, "%.1f KB", n / 1024.0);
    }
    return String.format(Locale.ROOT, "%.1f MB", n / (1024.0 * 1024));
  }

  private static String duration(long seconds) {
    return String.format(Locale.ROOT, "%d:%02d:%02d", seconds / 3600, (seconds / 60) % 60, seconds % 60);
  }
}
