package org.pairpulse.ingest.worker;

import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.pairpulse.ingest.front.BasketSink;

/**
 * Baskets of one partition on their way to its engines, in order. Filled by one thread, then handed over.
 * Keeps each basket's attributes (a reference, no copy) only when segments are counted.
 */
public final class BasketBatch implements BasketSink {
  private long[] times;
  private String[][] items;
  private Map<String, String>[] attributes; // null unless segments are counted
  private int size;

  /** A batch that drops attributes (no segment attributes configured). */
  public BasketBatch(int expected) {
    this(expected, false);
  }

  /** A batch that keeps each basket's attributes when {@code keepAttributes}. */
  public BasketBatch(int expected, boolean keepAttributes) {
    int capacity = Math.max(expected, 4);
    this.times = new long[capacity];
    this.items = new String[capacity][];
    this.attributes = keepAttributes ? newAttributes(capacity) : null;
  }

  @SuppressWarnings("unchecked")
  private static Map<String, String>[] newAttributes(int capacity) {
    return (Map<String, String>[]) new Map<?, ?>[capacity];
  }

  @Override
  public void basket(String basketId, long eventMillis, List<String> basketItems) {
    basket(basketId, eventMillis, basketItems, Map.of());
  }

  @Override
  public void basket(String basketId, long eventMillis, List<String> basketItems, Map<String, String> basketAttributes) {
    if (size == times.length) {
      times = Arrays.copyOf(times, size * 2);
      items = Arrays.copyOf(items, size * 2);
      if (attributes != null) {
        attributes = Arrays.copyOf(attributes, size * 2);
      }
    }
    times[size] = eventMillis;
    items[size] = basketItems.toArray(new String[0]);
    if (attributes != null) {
      attributes[size] = basketAttributes;
    }
    size++;
  }

  public int size() {
    return size;
  }

  long timeAt(int i) {
    return times[i];
  }

  String[] itemsAt(int i) {
    return items[i];
  }

  /** The attributes of basket {@code i}; null when this batch drops attributes. */
  Map<String, String> attributesAt(int i) {
    return attributes == null ? null : attributes[i];
  }
}
