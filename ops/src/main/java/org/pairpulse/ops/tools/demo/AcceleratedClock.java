package org.pairpulse.ops.tools.demo;

import java.util.concurrent.TimeUnit;

/**
 * The demo's simulated clock: simulated time runs {@code speed} times faster than the wall clock from
 * {@code simStartMillis}, counted from the moment {@link #start()} is called (monotonic, by
 * {@link System#nanoTime()}). Before the start it stands at {@code simStartMillis}.
 */
final class AcceleratedClock {
  private final long simStartMillis;
  private final double speed;
  private volatile long wallStartNanos;
  private volatile boolean started;

  /**
   * @param simStartMillis simulated time at the start (epoch ms)
   * @param speed simulated milliseconds per wall-clock millisecond ({@code > 0})
   */
  AcceleratedClock(long simStartMillis, double speed) {
    if (!(speed > 0) || Double.isInfinite(speed)) {
      throw new IllegalArgumentException("speed must be > 0, got " + speed);
    }
    this.simStartMillis = simStartMillis;
    this.speed = speed;
  }

  void start() {
    wallStartNanos = System.nanoTime();
    started = true;
  }

  boolean isStarted() {
    return started;
  }

  double speed() {
    return speed;
  }

  long simStartMillis() {
    return simStartMillis;
  }

  /** Simulated now (epoch ms). */
  long simMillis() {
    if (!started) {
      return simStartMillis;
    }
    double wallMillis = (System.nanoTime() - wallStartNanos) / 1e6;
    return simStartMillis + (long) (wallMillis * speed);
  }

  /** Wall-clock milliseconds until simulated time reaches {@code simMillis} (negative when past). */
  long wallMillisUntil(long simMillis) {
    double dueWallNanos = wallStartNanos + (simMillis - simStartMillis) / speed * 1e6;
    return TimeUnit.NANOSECONDS.toMillis((long) (dueWallNanos - System.nanoTime()));
  }
}
