package org.pairpulse.ops.analysis.backtest;

import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * One basket of a replay, as ingest's front lets it through: id, event time, items (as they arrived; the
 * engine counts each distinct item once) and attributes (segment values; empty for CSV line items).
 *
 * @param id the basket id
 * @param eventMillis the basket's event time in epoch milliseconds
 * @param items the item ids (immutable)
 * @param attributes the basket's attributes (immutable, possibly empty)
 */
public record ReplayBasket(String id, long eventMillis, List<String> items, Map<String, String> attributes) {
  public ReplayBasket {
    Objects.requireNonNull(id, "id");
    items = List.copyOf(items);
    attributes = attributes == null ? Map.of() : Map.copyOf(attributes);
  }
}
