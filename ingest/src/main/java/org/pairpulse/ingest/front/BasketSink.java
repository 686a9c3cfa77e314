package org.pairpulse.ingest.front;

import java.util.List;
import java.util.Map;

/** Receives the baskets a {@link PartitionFront} lets through, in order. */
@FunctionalInterface
public interface BasketSink {
  /** One basket to count: its id, event time and items (immutable). */
  void basket(String basketId, long eventMillis, List<String> items);

  /**
   * One basket with its attributes (immutable; empty for baskets assembled from line items, which carry none).
   * The default ignores the attributes; sinks that count segments override it.
   */
  default void basket(String basketId, long eventMillis, List<String> items, Map<String, String> attributes) {
    basket(basketId, eventMillis, items);
  }

  /** A sink that wants every basket's attributes (an empty map for assembled baskets). */
  @FunctionalInterface
  interface WithAttributes {
    void basket(String basketId, long eventMillis, List<String> items, Map<String, String> attributes);
  }

  /** The sink that hands every basket to {@code sink} with its attributes. */
  static BasketSink withAttributes(WithAttributes sink) {
    return new BasketSink() {
      @Override
      public void basket(String basketId, long eventMillis, List<String> items) {
        sink.basket(basketId, eventMillis, items, Map.of());
      }

      @Override
      public void basket(String basketId, long eventMillis, List<String> items, Map<String, String> attributes) {
        sink.basket(basketId, eventMillis, items, attributes);
      }
    };
  }
}
