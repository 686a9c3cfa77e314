package org.pairpulse.ingest.event;

/**
 * Why a record could not be used. The {@link #wireName()} is what the dead-letter topic's reason header
 * and the {@code reason} metric tag carry; it never changes once published.
 */
public enum DeadLetterReason {
  /** Not parseable: invalid JSON or CSV, invalid UTF-8, an empty or null record value. */
  MALFORMED("malformed"),
  /** A required field is absent (basket id, time, items; for a line item: basket, time, item). */
  MISSING_FIELD("missing_field"),
  /** A field has the wrong type or an unusable value (a time that is no timestamp, a quantity ≤ 0, ...). */
  WRONG_TYPE("wrong_type"),
  /** A basket with no items. */
  EMPTY_BASKET("empty_basket"),
  /** A basket with more items than {@code max.basket.items}. */
  OVERSIZED_BASKET("oversized_basket"),
  /** A basket or item id longer than {@code max.id.chars}, or an attribute key or value as long. */
  ID_TOO_LONG("id_too_long"),
  /** An event time more than {@code max.future.ms} ahead of the wall clock. */
  TIME_IN_FUTURE("time_in_future"),
  /** An event time more than {@code max.past.ms} behind the wall clock. */
  TIME_TOO_OLD("time_too_old"),
  /** An event older than its partition's watermark (newest event time minus {@code allowed.lateness.ms}). */
  LATE("late"),
  /** A CloudEvent of an unknown type or spec version, a batch, or data that is not JSON. */
  UNSUPPORTED_EVENT("unsupported_event");

  private final String wireName;

  DeadLetterReason(String wireName) {
    this.wireName = wireName;
  }

  /** The stable lower-case name carried by headers and metrics. */
  public String wireName() {
    return wireName;
  }

  /** The reason with this wire name. */
  public static DeadLetterReason fromWireName(String name) {
    for (DeadLetterReason reason : values()) {
      if (reason.wireName.equals(name)) {
        return reason;
      }
    }
    throw new IllegalArgumentException("unknown dead-letter reason '" + name + "'");
  }
}
