package org.pairpulse.ingest.event;

/**
 * Reads the JSON of one record into an event for {@link EventDecoder}: a plain event, or a structured-mode
 * CloudEvent envelope, or the data of a binary-mode CloudEvent. Every refusal is an
 * {@link InvalidEventException} with its {@link DeadLetterReason}.
 */
interface EventReader {
  /** What shape a payload must have. */
  enum Shape { ANY, BASKET, LINE_ITEM }

  /** A whole record: a plain event, or a structured-mode CloudEvent (by header or by its specversion key). */
  BasketEvent readRecord(byte[] bytes, int from, int to, boolean structuredCloudEvent) throws InvalidEventException;

  /** The data of a binary-mode CloudEvent: a plain event of {@code shape}, its time defaulting to {@code ceTimeMillis}. */
  BasketEvent readData(byte[] bytes, Shape shape, long ceTimeMillis) throws InvalidEventException;

  /** At most 40 chars of {@code s}, for messages that quote input. */
  static String clip(String s) {
    return s.length() > 40 ? s.substring(0, 40) + "..." : s;
  }
}
