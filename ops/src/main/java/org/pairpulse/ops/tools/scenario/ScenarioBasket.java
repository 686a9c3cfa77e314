package org.pairpulse.ops.tools.scenario;

import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * One generated basket: one customer's purchases in one visit.
 *
 * @param id the basket id, unique within a run ({@code kc-000000001}, …, in arrival order)
 * @param eventMillis the event time in epoch milliseconds
 * @param items the distinct item ids, in lexicographic order (immutable)
 * @param attributes segment values in a fixed order: {@code channel} ({@code app}, {@code web}, {@code store})
 *     then {@code region} (immutable)
 */
public record ScenarioBasket(String id, long eventMillis, List<String> items, Map<String, String> attributes) {
  public ScenarioBasket {
    Objects.requireNonNull(id, "id");
    items = List.copyOf(items);
    if (items.isEmpty()) {
      throw new IllegalArgumentException("basket " + id + " has no items");
    }
    for (Map.Entry<String, String> attribute : attributes.entrySet()) {
      Objects.requireNonNull(attribute.getKey(), "attribute key");
      Objects.requireNonNull(attribute.getValue(), "attribute value");
    }
    attributes = Collections.unmodifiableMap(new LinkedHashMap<>(attributes));
  }
}
