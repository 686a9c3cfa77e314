package org.pairpulse.ops.tools.demo;

import java.util.Locale;

/**
 * What the demo's progress line says ({@link org.pairpulse.ops.analysis.terminal.ProgressLine} draws it): the simulated clock,
 * how far ingest has counted, the rates and counts, in the scenario's own time ("day 3 19:40").
 */
final class DemoProgressText {
  private DemoProgressText() {}

  /** The progress line for {@code p}. */
  static String format(Demo.Progress p) {
    String simulated = simTime(p.simMillis(), p.simStartMillis());
    String counted = p.watermarkMillis() == Long.MIN_VALUE ? "-" : simTime(p.watermarkMillis(), p.simStartMillis());
    if (counted.length() > 6 && simulated.length() > 6
        && counted.substring(0, counted.length() - 6).equals(simulated.substring(0, simulated.length() - 6))) {
      counted = counted.substring(counted.length() - 5); // same day: the time only
    }
    return String.format(Locale.ROOT, "sim %s%s (counted %s) | %,.0f events/s | %,d baskets | %,d tracked pairs"
            + " | %,d rules | %d alerts%s%s", simulated, p.fastForwarding() ? " fast-forward" : "", counted,
        p.eventsPerSecond(), p.baskets(), p.trackedPairs(), p.rules(), p.alerts(),
        p.alerts() == 0 ? "" : " (" + DemoCommand.alerts(p.alertsRaised()) + ")",
        p.deadLetters() == 0 ? "" : String.format(Locale.ROOT, " | %,d dead letters", p.deadLetters()));
  }

  /** "3d 12h", "90m": a simulated span. */
  static String simDuration(long millis) {
    long minutes = millis / 60_000;
    long days = minutes / (24 * 60);
    long hours = minutes / 60 % 24;
    long rest = minutes % 60;
    StringBuilder s = new StringBuilder();
    if (days > 0) {
      s.append(days).append('d');
    }
    if (hours > 0) {
      s.append(s.length() > 0 ? " " : "").append(hours).append('h');
    }
    if (rest > 0 || s.length() == 0) {
      s.append(s.length() > 0 ? " " : "").append(rest).append('m');
    }
    return s.toString();
  }

  /** "day 3 19:40" relative to the scenario's day 0, 00:00. */
  static String simTime(long millis, long startMillis) {
    if (millis == Long.MIN_VALUE) {
      return "-";
    }
    long minutes = Math.floorDiv(millis - startMillis, 60_000L);
    long day = Math.floorDiv(minutes, 24 * 60);
    long minuteOfDay = Math.floorMod(minutes, 24 * 60);
    return String.format(Locale.ROOT, "day %d %02d:%02d", day, minuteOfDay / 60, minuteOfDay % 60);
  }
}
