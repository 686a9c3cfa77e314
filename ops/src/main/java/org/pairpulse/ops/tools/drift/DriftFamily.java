package org.pairpulse.ops.tools.drift;

import java.util.ArrayList;
import java.util.EnumSet;
import java.util.List;

/**
 * The drift family: every {@link DriftShape} planted on one stream per traffic level and seed ({@link #stream}), and
 * one-shape member streams for tests ({@link #member}). "Never tune a threshold to one member: the family is the
 * test" (issue 11).
 */
public final class DriftFamily {
  /** Simulated days of a full stream: the changes lie on days 2 to 5, with a day of evidence after the last. */
  public static final int DEFAULT_DAYS = 7;
  /** Simulated days of a member stream: two days before its change (on day 2), two after. */
  public static final int MEMBER_DAYS = 4;
  /** The day of a member's change. */
  public static final int MEMBER_CHANGE_DAY = 2;
  public static final long DEFAULT_SEED = 20261101L;

  private DriftFamily() {}

  /** All shapes on one stream, on the full schedule of {@link DriftShape}. */
  public static DriftStream stream(long seed, TrafficLevel level, int days) {
    return new DriftStream(seed, level, DriftStream.DEFAULT_START, days, EnumSet.allOf(DriftShape.class), -1);
  }

  /** One full stream per (seed, level), seeds outer: the streams {@code bench drift} replays. */
  public static List<DriftStream> streams(List<Long> seeds, List<TrafficLevel> levels, int days) {
    List<DriftStream> streams = new ArrayList<>();
    for (long seed : seeds) {
      for (TrafficLevel level : levels) {
        streams.add(stream(seed + streams.size(), level, days));
      }
    }
    return streams;
  }

  /**
   * One shape alone on a {@value #MEMBER_DAYS}-day stream, its change (or event) on day {@value #MEMBER_CHANGE_DAY}
   * at the shape's hour of the full schedule. A small stream for tests: with {@link TrafficLevel#QUIET} about 180,000
   * baskets; {@code level.scaled(0.25)} gives a quarter.
   */
  public static DriftStream member(DriftShape shape, long seed, TrafficLevel level) {
    return member(shape, seed, level, MEMBER_DAYS);
  }

  /** {@link #member(DriftShape, long, TrafficLevel)} over {@code days} (at least {@value #MEMBER_CHANGE_DAY} + 1). */
  public static DriftStream member(DriftShape shape, long seed, TrafficLevel level, int days) {
    return new DriftStream(seed, level, DriftStream.DEFAULT_START, days, EnumSet.of(shape), MEMBER_CHANGE_DAY);
  }
}
