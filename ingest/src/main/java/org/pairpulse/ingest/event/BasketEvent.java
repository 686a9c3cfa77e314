package org.pairpulse.ingest.event;

/**
 * One decoded input event: a whole {@link Basket} or one {@link LineItem} of a basket that is still being
 * assembled. What the {@link EventDecoder} returns for a record it accepts.
 */
public sealed interface BasketEvent permits Basket, LineItem {
  /** The basket id (the record key by contract). */
  String basketId();

  /** Event time in epoch milliseconds. */
  long eventMillis();
}
