package org.pairpulse.serve.alerts;

import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import org.pairpulse.serve.drift.AlertEvent;

/** The newest alert events, bounded (the oldest is dropped); thread-safe. */
public final class AlertHistory {
  private final int capacity;
  private final ArrayDeque<AlertEvent> events;

  public AlertHistory(int capacity) {
    if (capacity < 1) {
      throw new IllegalArgumentException("capacity must be >= 1, got " + capacity);
    }
    this.capacity = capacity;
    this.events = new ArrayDeque<>(Math.min(capacity, 1024));
  }

  public synchronized void add(AlertEvent event) {
    if (events.size() == capacity) {
      events.removeFirst();
    }
    events.addLast(event);
  }

  /** Up to {@code count} events, newest first; {@code segment} null for all segments. */
  public synchronized List<AlertEvent> newest(String segment, int count) {
    List<AlertEvent> out = new ArrayList<>(Math.min(count, events.size()));
    for (Iterator<AlertEvent> it = events.descendingIterator(); it.hasNext() && out.size() < count; ) {
      AlertEvent e = it.next();
      if (segment == null || segment.equals(e.segment())) {
        out.add(e);
      }
    }
    return out;
  }

  public synchronized int size() {
    return events.size();
  }
}
