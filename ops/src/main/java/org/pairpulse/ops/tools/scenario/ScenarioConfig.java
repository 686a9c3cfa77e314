package org.pairpulse.ops.tools.scenario;

import java.time.Duration;
import java.time.Instant;
import java.util.Objects;

/**
 * What the Kestrel Connect scenario generator plays: a seed, a simulated start and length, a basket rate and
 * an optional out-of-order jitter. Every field is checked on construction.
 *
 * <table>
 *   <caption>Settings</caption>
 *   <tr><th>field</th><th>type</th><th>default</th><th>valid</th><th>meaning</th></tr>
 *   <tr><td>{@code seed}</td><td>long</td><td>{@value #DEFAULT_SEED}</td><td>any</td>
 *       <td>the same seed and settings give the same baskets, byte for byte</td></tr>
 *   <tr><td>{@code start}</td><td>Instant</td><td>2026-06-01T00:00:00Z</td><td>whole millisecond</td>
 *       <td>simulated start: day 0 begins here; planted events are placed relative to it</td></tr>
 *   <tr><td>{@code durationDays}</td><td>int</td><td>{@value #DEFAULT_DURATION_DAYS}</td>
 *       <td>1..{@value #MAX_DURATION_DAYS}</td><td>simulated length; the planted events need 6 days to be
 *       seen on both sides</td></tr>
 *   <tr><td>{@code basketsPerMinute}</td><td>double</td><td>{@value #DEFAULT_BASKETS_PER_MINUTE}</td>
 *       <td>(0, {@value #MAX_BASKETS_PER_MINUTE}]</td><td>mean baskets per simulated minute over a day;
 *       the diurnal rhythm moves the instant rate between about 0.16× (03:00–04:00) and 2.2× (20:00)</td></tr>
 *   <tr><td>{@code outOfOrderMillis}</td><td>long</td><td>0 (off)</td>
 *       <td>0..{@value #MAX_OUT_OF_ORDER_MILLIS}</td><td>each basket's event time is moved back by a uniform
 *       0..outOfOrderMillis (never before {@code start}), while baskets keep their arrival order: the stream
 *       is then out of order by at most this much</td></tr>
 * </table>
 *
 * @param seed the random seed
 * @param start the simulated start (event time of day 0, 00:00)
 * @param durationDays the simulated length in days
 * @param basketsPerMinute the mean basket rate per simulated minute
 * @param outOfOrderMillis the largest backward jitter of an event time; 0 keeps event times in order
 */
public record ScenarioConfig(long seed, Instant start, int durationDays, double basketsPerMinute,
    long outOfOrderMillis) {

  public static final long DEFAULT_SEED = 20260601L;
  public static final Instant DEFAULT_START = Instant.parse("2026-06-01T00:00:00Z");
  public static final int DEFAULT_DURATION_DAYS = 8;
  public static final double DEFAULT_BASKETS_PER_MINUTE = 20.0;
  public static final int MAX_DURATION_DAYS = 366;
  public static final double MAX_BASKETS_PER_MINUTE = 100_000.0;
  public static final long MAX_OUT_OF_ORDER_MILLIS = Duration.ofDays(1).toMillis();

  static final long DAY_MILLIS = Duration.ofDays(1).toMillis();
  static final long HOUR_MILLIS = Duration.ofHours(1).toMillis();

  public ScenarioConfig {
    Objects.requireNonNull(start, "start");
    if (start.getNano() % 1_000_000 != 0) {
      throw new IllegalArgumentException("start must be a whole millisecond, got " + start);
    }
    if (durationDays < 1 || durationDays > MAX_DURATION_DAYS) {
      throw new IllegalArgumentException("durationDays must be in 1.." + MAX_DURATION_DAYS + ", got " + durationDays);
    }
    if (!(basketsPerMinute > 0 && basketsPerMinute <= MAX_BASKETS_PER_MINUTE)) {
      throw new IllegalArgumentException(
          "basketsPerMinute must be in (0, " + MAX_BASKETS_PER_MINUTE + "], got " + basketsPerMinute);
    }
    if (outOfOrderMillis < 0 || outOfOrderMillis > MAX_OUT_OF_ORDER_MILLIS) {
      throw new IllegalArgumentException(
          "outOfOrderMillis must be in 0.." + MAX_OUT_OF_ORDER_MILLIS + ", got " + outOfOrderMillis);
    }
    // the end must be representable
    Math.addExact(start.toEpochMilli(), durationDays * DAY_MILLIS);
  }

  /** Seed 20260601, start 2026-06-01T00:00Z, 8 days, 20 baskets per minute, no jitter. */
  public static ScenarioConfig defaults() {
    return new ScenarioConfig(DEFAULT_SEED, DEFAULT_START, DEFAULT_DURATION_DAYS, DEFAULT_BASKETS_PER_MINUTE, 0);
  }

  public ScenarioConfig withSeed(long seed) {
    return new ScenarioConfig(seed, start, durationDays, basketsPerMinute, outOfOrderMillis);
  }

  public ScenarioConfig withStart(Instant start) {
    return new ScenarioConfig(seed, start, durationDays, basketsPerMinute, outOfOrderMillis);
  }

  public ScenarioConfig withDurationDays(int durationDays) {
    return new ScenarioConfig(seed, start, durationDays, basketsPerMinute, outOfOrderMillis);
  }

  public ScenarioConfig withBasketsPerMinute(double basketsPerMinute) {
    return new ScenarioConfig(seed, start, durationDays, basketsPerMinute, outOfOrderMillis);
  }

  public ScenarioConfig withOutOfOrderMillis(long outOfOrderMillis) {
    return new ScenarioConfig(seed, start, durationDays, basketsPerMinute, outOfOrderMillis);
  }

  /** The simulated start in epoch milliseconds. */
  public long startMillis() {
    return start.toEpochMilli();
  }

  /** The simulated end (exclusive) in epoch milliseconds. */
  public long endMillis() {
    return startMillis() + durationDays * DAY_MILLIS;
  }

  /** The event time of {@code hour}:00 on simulated day {@code day} (day 0 begins at {@link #start}). */
  public long millisAt(int day, int hour) {
    return startMillis() + day * DAY_MILLIS + hour * HOUR_MILLIS;
  }
}
