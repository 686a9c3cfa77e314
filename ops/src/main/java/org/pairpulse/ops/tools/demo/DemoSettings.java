package org.pairpulse.ops.tools.demo;

import java.time.Duration;
import java.time.Instant;
import java.time.LocalDate;
import java.time.ZoneOffset;
import java.util.List;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * What {@code pairpulse demo} plays.
 *
 * <h2>Demo horizons</h2>
 * The production horizons ({@code recent}: half-life 6 h, {@code day}: 24 h, {@code baseline}: 28 days)
 * are longer than a demo run of a few simulated days. The demo scales two of them so that a shift shows
 * within the run:
 * <ul>
 *   <li>{@code recent}: decay, half-life <b>2 simulated hours</b>. A shift dominates {@code recent} within a
 *       few hours, so the planted emerging pair (from 12:00 of day 3) is alerted the same day; with 6 h the
 *       alert comes hours later.</li>
 *   <li>{@code day}: window 24 h in 24 panes, as in production.</li>
 *   <li>{@code baseline}: window <b>7 simulated days</b> in 7 panes. Longer than the default run, so
 *       it holds the whole history the demo has seen (what a 28-day baseline holds after a month), with
 *       a quarter of the panes (memory). Drift compares {@code recent} against it.</li>
 * </ul>
 * The cohort floor's evidence horizon is the longest window, {@code baseline}.
 *
 * @param seed the scenario's seed
 * @param speed simulated milliseconds per wall-clock millisecond (1440: one simulated day a minute)
 * @param durationSimMillis simulated time to play; {@link #FOREVER} plays until stopped
 * @param host address the server binds
 * @param port the server's port (0: any free port)
 * @param basketsPerMinute mean baskets per simulated minute
 * @param partitions partitions of the basket topic. One by default: one engine thread counts every partition of
 *     an instance anyway, and each partition holds a full-size engine that every refresh merges, so on one
 *     machine more partitions cost memory and refresh time; more show the per-partition state and its merge
 * @param simStart simulated time of day 0, 00:00
 * @param refreshIntervalMillis how often ingest publishes a pair table (wall clock)
 * @param fastForwardSimMillis simulated time from day 0 sent as fast as ingest takes it (a backfill) before
 *     the accelerated clock starts; 0 plays everything on the clock
 */
public record DemoSettings(long seed, double speed, long durationSimMillis, String host, int port,
    double basketsPerMinute, int partitions, Instant simStart, long refreshIntervalMillis, long fastForwardSimMillis) {

  /** Plays until stopped (the scenario itself ends after {@value ScenarioConfig#MAX_DURATION_DAYS} simulated days). */
  public static final long FOREVER = Long.MAX_VALUE;
  public static final long DAY_MILLIS = Duration.ofDays(1).toMillis();
  /** One simulated day a minute. */
  public static final double DEFAULT_SPEED = DAY_MILLIS / 60_000.0;
  /** Past the planted emerging pairs (day 3, 12:00 and 15:00) and the fading one (day 5, 00:00). */
  public static final long DEFAULT_DURATION_SIM_MILLIS = Duration.ofDays(6).toMillis();
  public static final int DEFAULT_PORT = 8470;
  public static final double DEFAULT_BASKETS_PER_MINUTE = 40;
  public static final int DEFAULT_PARTITIONS = 1;
  public static final long DEFAULT_REFRESH_INTERVAL_MILLIS = 1000;

  public DemoSettings {
    if (!(speed > 0) || speed > 1e7) {
      throw new IllegalArgumentException("speed must be in (0, 1e7] simulated ms per ms, got " + speed);
    }
    if (durationSimMillis < Duration.ofHours(1).toMillis()) {
      throw new IllegalArgumentException("the duration must be at least 1 simulated hour");
    }
    if (port < 0 || port > 65535) {
      throw new IllegalArgumentException("port must be in 0..65535, got " + port);
    }
    if (!(basketsPerMinute > 0 && basketsPerMinute <= ScenarioConfig.MAX_BASKETS_PER_MINUTE)) {
      throw new IllegalArgumentException("baskets per minute must be in (0, " + ScenarioConfig.MAX_BASKETS_PER_MINUTE
          + "], got " + basketsPerMinute);
    }
    if (partitions < 1 || partitions > 64) {
      throw new IllegalArgumentException("partitions must be in 1..64, got " + partitions);
    }
    if (refreshIntervalMillis < 50) {
      throw new IllegalArgumentException("refresh interval must be >= 50 ms, got " + refreshIntervalMillis);
    }
    if (fastForwardSimMillis < 0 || fastForwardSimMillis >= durationSimMillis) {
      throw new IllegalArgumentException("the fast-forward must be >= 0 and shorter than the duration");
    }
  }

  /** The defaults: seed of the scenario, a simulated day a minute, 6 simulated days, port 8470. */
  public static DemoSettings defaults() {
    return builder().build();
  }

  /** A builder holding {@link #defaults()}. */
  public static Builder builder() {
    return new Builder();
  }

  /**
   * Midnight (UTC) seven days before today: the default run ends about now, so the dashboard's dates are
   * recent; ingest's future-time check is widened for runs that go on past today.
   */
  public static Instant defaultSimStart() {
    return LocalDate.now(ZoneOffset.UTC).minusDays(7).atStartOfDay(ZoneOffset.UTC).toInstant();
  }

  /** Where the accelerated clock starts: day 0 plus the fast-forward. */
  public long clockStartMillis() {
    return scenario().startMillis() + fastForwardSimMillis;
  }

  /** Wall-clock seconds one simulated day takes. */
  public double simDaySeconds() {
    return DAY_MILLIS / speed / 1000.0;
  }

  /** The scenario: whole simulated days covering the duration (at most a year). */
  public ScenarioConfig scenario() {
    long days = durationSimMillis == FOREVER ? ScenarioConfig.MAX_DURATION_DAYS
        : Math.min(ScenarioConfig.MAX_DURATION_DAYS, (durationSimMillis + DAY_MILLIS - 1) / DAY_MILLIS);
    return new ScenarioConfig(seed, simStart, (int) days, basketsPerMinute, 0);
  }

  /** The simulated end: start + duration, or the scenario's end. */
  public long simEndMillis() {
    ScenarioConfig scenario = scenario();
    return durationSimMillis == FOREVER ? scenario.endMillis()
        : Math.min(scenario.endMillis(), scenario.startMillis() + durationSimMillis);
  }

  /** The demo horizons (see the class comment). */
  public static List<HorizonSpec> horizons() {
    return List.of(HorizonSpec.decay("recent", Duration.ofHours(2)), HorizonSpec.window("day", Duration.ofHours(24), 24),
        HorizonSpec.window("baseline", Duration.ofDays(7), 7));
  }

  /**
   * The demo's engine: the demo horizons, 4,096 tracked items (the catalog has about 2,000), the other
   * settings at their defaults (pair ε 0.001, 16,384 tracked pairs).
   */
  /** The basket attribute the demo counts segments by: the sales channel (app, web, store). */
  public static final String SEGMENT_ATTRIBUTE = "channel";

  public static EngineConfig engine() {
    return EngineConfig.builder().horizons(horizons()).trackedItemCapacity(4096).build();
  }

  /** Settings that start at the defaults; {@link #build()} checks them together. */
  public static final class Builder {
    private long seed = ScenarioConfig.DEFAULT_SEED;
    private double speed = DEFAULT_SPEED;
    private long durationSimMillis = DEFAULT_DURATION_SIM_MILLIS;
    private final String host = "127.0.0.1";
    private int port = DEFAULT_PORT;
    private double basketsPerMinute = DEFAULT_BASKETS_PER_MINUTE;
    private int partitions = DEFAULT_PARTITIONS;
    private final Instant simStart = defaultSimStart();
    private long refreshIntervalMillis = DEFAULT_REFRESH_INTERVAL_MILLIS;
    private long fastForwardSimMillis;

    private Builder() {}

    public Builder seed(long value) {
      this.seed = value;
      return this;
    }

    /** Simulated milliseconds per wall-clock millisecond. */
    public Builder speed(double value) {
      this.speed = value;
      return this;
    }

    public Builder durationSimMillis(long value) {
      this.durationSimMillis = value;
      return this;
    }

    public Builder port(int value) {
      this.port = value;
      return this;
    }

    public Builder basketsPerMinute(double value) {
      this.basketsPerMinute = value;
      return this;
    }

    public Builder partitions(int value) {
      this.partitions = value;
      return this;
    }

    public Builder refreshIntervalMillis(long value) {
      this.refreshIntervalMillis = value;
      return this;
    }

    public Builder fastForwardSimMillis(long value) {
      this.fastForwardSimMillis = value;
      return this;
    }

    /** @throws IllegalArgumentException when a setting is out of its range (see the record's checks) */
    public DemoSettings build() {
      return new DemoSettings(seed, speed, durationSimMillis, host, port, basketsPerMinute, partitions, simStart,
          refreshIntervalMillis, fastForwardSimMillis);
    }
  }
}
