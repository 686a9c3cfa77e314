package org.pairpulse.ingest.event;

import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * A basket event: one record carries one whole basket.
 *
 * @param basketId the basket id (an order, a session, a customer-day)
 * @param eventMillis the basket's event time in epoch milliseconds; drives windows and decay
 * @param items the item ids as they arrived (immutable; duplicates are allowed and count once)
 * @param attributes optional attributes (immutable, empty when absent); those named in {@code segments.attributes} make
 *     segments, the others are ignored
 */
public record Basket(String basketId, long eventMillis, List<String> items, Map<String, String> attributes)
    implements BasketEvent {
  public Basket {
    Objects.requireNonNull(basketId, "basketId");
    items = List.copyOf(items);
    attributes = attributes == null ? Map.of() : Map.copyOf(attributes);
  }
}
