package org.pairpulse.sketch.time;

import java.util.concurrent.atomic.AtomicLong;

/** A clock that moves only when told to; thread-safe. */
public final class ManualClock implements EventClock {
  private final AtomicLong nowMillis;

  public ManualClock(long startMillis) {
    this.nowMillis = new AtomicLong(startMillis);
  }

  @Override
  public long millis() {
    return nowMillis.get();
  }

  /** Moves the clock forward (or back, for tests of late data) by {@code deltaMillis}. */
  public long advance(long deltaMillis) {
    return nowMillis.addAndGet(deltaMillis);
  }

  public void set(long millis) {
    nowMillis.set(millis);
  }
}
