package org.pairpulse.ops.tools.drift;

import java.util.Objects;

/**
 * A traffic level of the drift family: the basket rate at the daily peak (20:00 on weekdays). The rate over the day
 * follows {@link DriftStream}'s day/night curve (about 7 % of the peak at 03:00, 46 % on average), times 0.6 on the
 * two weekend days when the stream has a {@link DriftShape#TRAFFIC_SHIFT}.
 *
 * @param name a short name for people ({@code quiet}, {@code busy})
 * @param peakBasketsPerHour baskets per simulated hour at the weekday peak
 */
public record TrafficLevel(String name, double peakBasketsPerHour) {
  /** 4,000 baskets per hour at the peak: about 44,000 a weekday, under 300 an hour at 03:00. */
  public static final TrafficLevel QUIET = new TrafficLevel("quiet", 4_000);
  /** 20,000 baskets per hour at the peak: about 220,000 a weekday. */
  public static final TrafficLevel BUSY = new TrafficLevel("busy", 20_000);

  public TrafficLevel {
    Objects.requireNonNull(name, "name");
    if (!(peakBasketsPerHour > 0 && peakBasketsPerHour <= 10_000_000)) {
      throw new IllegalArgumentException("peakBasketsPerHour must be in (0, 1e7], got " + peakBasketsPerHour);
    }
  }

  /** The same level with its rate multiplied by {@code factor} (named e.g. {@code quiet×0.05}). */
  public TrafficLevel scaled(double factor) {
    return factor == 1.0 ? this : new TrafficLevel(name + "x" + factor, peakBasketsPerHour * factor);
  }

  /** {@code quiet} or {@code busy} (case-insensitive). */
  public static TrafficLevel named(String name) {
    for (TrafficLevel level : new TrafficLevel[] {QUIET, BUSY}) {
      if (level.name.equalsIgnoreCase(name.strip())) {
        return level;
      }
    }
    throw new IllegalArgumentException("unknown traffic level '" + name + "' (quiet, busy)");
  }
}
