package org.pairpulse.ops.analysis.terminal;

import java.util.Locale;
import org.pairpulse.ingest.file.ReadProgress;
import org.pairpulse.sketch.time.EventClock;

/**
 * How far a file has been read, drawn on a {@link ProgressLine}: percent of bytes, lines and their rate, baskets,
 * dead letters and the time left, at most once per {@code intervalMillis}, and a final line with the time taken.
 * Given to ingest's {@code FileSource} as its {@link ReadProgress} by {@code backtest} and {@code report}.
 */
public final class FileProgress implements ReadProgress {
  private final ProgressLine line;
  private final EventClock clock;
  private final String name;
  private final long totalBytes;
  private final long intervalMillis;
  private final long startMillis;
  private long lastPrintMillis;

  /**
   * @param line where the progress is drawn
   * @param clock the wall clock of the rate, the time left and the interval
   * @param name what is read, the line's first word
   * @param totalBytes the file's size (its compressed size for gzip: bytes are counted before decompression)
   * @param intervalMillis the least time between two lines
   */
  public FileProgress(ProgressLine line, EventClock clock, String name, long totalBytes, long intervalMillis) {
    this.line = line;
    this.clock = clock;
    this.name = name;
    this.totalBytes = totalBytes;
    this.intervalMillis = intervalMillis;
    this.startMillis = clock.millis();
    this.lastPrintMillis = startMillis;
  }

  /** Progress on standard error: redrawn twice a second on a terminal, one line every 5 s otherwise. */
  public static FileProgress onStandardError(String name, long totalBytes) {
    ProgressLine line = ProgressLine.onStandardError();
    return new FileProgress(line, EventClock.system(), name, totalBytes, line.inPlace() ? 500 : 5000);
  }

  @Override
  public void update(long bytesRead, long lines, long baskets, long deadLetters) {
    long now = clock.millis();
    if (now - lastPrintMillis >= intervalMillis) {
      lastPrintMillis = now;
      line.progress(text(now, bytesRead, lines, baskets, deadLetters, false));
    }
  }

  @Override
  public void finish(long bytesRead, long lines, long baskets, long deadLetters) {
    line.progress(text(clock.millis(), bytesRead, lines, baskets, deadLetters, true));
    line.end();
  }

  private String text(long now, long bytesRead, long lines, long baskets, long deadLetters, boolean last) {
    double seconds = Math.max(1, now - startMillis) / 1000.0;
    double fraction = totalBytes > 0 ? Math.min(1.0, (double) bytesRead / totalBytes) : 0;
    String eta = fraction > 0 && !last ? " eta " + duration((long) (seconds * (1 - fraction) / fraction)) : "";
    return String.format(Locale.ROOT, "%s %5.1f%% %s/%s  %,d lines (%,.0f/s)  %,d baskets  %,d dead letters%s%s",
        name, fraction * 100, bytes(bytesRead), bytes(totalBytes), lines, lines / seconds, baskets, deadLetters,
        last ? " in " + duration((long) seconds) : "", eta);
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
