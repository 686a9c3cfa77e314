package org.pairpulse.ingest.event;

import java.time.Duration;
import java.util.Objects;
import org.pairpulse.sketch.time.EventClock;

/**
 * The bounds a decoded event must respect; anything outside is a dead letter.
 *
 * @param maxBasketItems most items a basket may carry ({@code max.basket.items})
 * @param maxIdChars longest basket id, item id, attribute key or value, in chars ({@code max.id.chars})
 * @param maxFutureMillis how far ahead of the wall clock an event time may be ({@code max.future.ms})
 * @param maxPastMillis how far behind the wall clock an event time may be ({@code max.past.ms})
 * @param maxAttributes most attributes (segment values) a basket may carry
 * @param clock the wall clock the two time bounds refer to
 */
public record EventLimits(int maxBasketItems, int maxIdChars, long maxFutureMillis, long maxPastMillis,
    int maxAttributes, EventClock clock) {

  public static final int DEFAULT_MAX_BASKET_ITEMS = 1000;
  public static final int DEFAULT_MAX_ID_CHARS = 256;
  public static final long DEFAULT_MAX_FUTURE_MILLIS = Duration.ofDays(1).toMillis();
  public static final long DEFAULT_MAX_PAST_MILLIS = Duration.ofDays(3650).toMillis();
  public static final int DEFAULT_MAX_ATTRIBUTES = 32;

  public EventLimits {
    Objects.requireNonNull(clock, "clock");
    if (maxBasketItems < 1 || maxIdChars < 1 || maxFutureMillis < 0 || maxPastMillis < 0 || maxAttributes < 0) {
      throw new IllegalArgumentException("limits must be positive: " + maxBasketItems + ", " + maxIdChars + ", "
          + maxFutureMillis + ", " + maxPastMillis + ", " + maxAttributes);
    }
  }

  /** The defaults against the machine's clock. */
  public static EventLimits defaults() {
    return defaults(EventClock.system());
  }

  /** The defaults against {@code clock}. */
  public static EventLimits defaults(EventClock clock) {
    return new EventLimits(DEFAULT_MAX_BASKET_ITEMS, DEFAULT_MAX_ID_CHARS, DEFAULT_MAX_FUTURE_MILLIS,
        DEFAULT_MAX_PAST_MILLIS, DEFAULT_MAX_ATTRIBUTES, clock);
  }

  /** Checks an event time against the wall-clock bounds ({@code time_in_future}, {@code time_too_old}). */
  public void checkTime(long eventMillis) throws InvalidEventException {
    long now = clock.millis();
    if (eventMillis > now && eventMillis - now > maxFutureMillis) {
      throw new InvalidEventException(DeadLetterReason.TIME_IN_FUTURE, "event time " + eventMillis + " is "
          + (eventMillis - now) + " ms ahead of the clock; max.future.ms is " + maxFutureMillis);
    }
    if (eventMillis < now && now - eventMillis > maxPastMillis) {
      throw new InvalidEventException(DeadLetterReason.TIME_TOO_OLD, "event time " + eventMillis + " is "
          + (now - eventMillis) + " ms behind the clock; max.past.ms is " + maxPastMillis);
    }
  }

  public void checkId(String what, String id) throws InvalidEventException {
    if (id.isEmpty()) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, what + " is empty");
    }
    if (id.length() > maxIdChars) {
      throw new InvalidEventException(DeadLetterReason.ID_TOO_LONG, what + " has " + id.length()
          + " chars; max.id.chars is " + maxIdChars);
    }
  }
}
