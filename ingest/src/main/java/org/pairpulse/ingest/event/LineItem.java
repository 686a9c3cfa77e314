package org.pairpulse.ingest.event;

import java.util.Objects;

/**
 * A line-item event: one item of a basket, or the basket's end marker. Line items with the same basket
 * id (the record key, so that they share a partition) are assembled into one basket.
 *
 * @param basketId the id of the basket this line belongs to
 * @param eventMillis the line's event time in epoch milliseconds
 * @param item the item id, or null for an end marker that carries no item
 * @param end true when this line closes its basket
 */
public record LineItem(String basketId, long eventMillis, String item, boolean end) implements BasketEvent {
  public LineItem {
    Objects.requireNonNull(basketId, "basketId");
    if (item == null && !end) {
      throw new IllegalArgumentException("a line item without an item must be an end marker");
    }
  }
}
