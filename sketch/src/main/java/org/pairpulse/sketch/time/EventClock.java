package org.pairpulse.sketch.time;

/**
 * A source of the current time in epoch milliseconds, injected wherever time matters so tests can run
 * on a {@link ManualClock}. Windows and decay run on event time (the basket's own timestamp); a clock
 * stamps publications (pair-table age) and advances idle streams.
 */
@FunctionalInterface
public interface EventClock {
  /** Current time in epoch milliseconds. */
  long millis();

  /** The machine's wall clock. */
  static EventClock system() {
    return System::currentTimeMillis;
  }
}
