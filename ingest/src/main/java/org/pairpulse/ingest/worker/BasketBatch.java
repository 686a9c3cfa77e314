package org.pairpulse.ingest.worker;

import java.util.Arrays;
import java.util.List;
import org.pairpulse.ingest.front.BasketSink;

/** Baskets of one partition on their way to its engine, in order. Filled by one thread, then handed over. */
public final class BasketBatch implements BasketSink {
  private long[] times;
  private String[][] items;
  private int size;

  public BasketBatch(int expected) {
    int capacity = Math.max(expected, 4);
    this.times = new long[capacity];
    this.items = new String[capacity][];
  }

  @Override
  public void basket(String basketId, long eventMillis, List<String> basketItems) {
    if (size == times.length) {
      times = Arrays.copyOf(times, size * 2);
      items = Arrays.copyOf(items, size * 2);
    }
    times[size] = eventMillis;
    items[size] = basketItems.toArray(new String[0]);
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
}
