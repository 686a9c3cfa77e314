package org.pairpulse.ingest.front;

import java.util.List;

/** Receives the baskets a {@link PartitionFront} lets through, in order. */
@FunctionalInterface
public interface BasketSink {
  /** One basket to count: its id, event time and items (immutable). */
  void basket(String basketId, long eventMillis, List<String> items);
}
