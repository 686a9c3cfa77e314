package org.pairpulse.serve.query;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;

/**
 * The {@code count} best elements of a stream under a total order, with a bounded heap: O(n log count) time,
 * O(count) space, instead of sorting all n. Under a total order (ties broken by ids) the result equals the
 * first {@code count} elements of the fully sorted list; the query tests check exactly that.
 */
final class BoundedBest<T> {
  private final Comparator<T> bestFirst;
  private final int count;
  private final PriorityQueue<T> heap;

  BoundedBest(int count, Comparator<T> bestFirst) {
    if (count < 1) {
      throw new IllegalArgumentException("count must be >= 1, got " + count);
    }
    this.bestFirst = bestFirst;
    this.count = count;
    this.heap = new PriorityQueue<>(count + 1, bestFirst.reversed()); // the worst kept element on top
  }

  void offer(T element) {
    heap.add(element);
    if (heap.size() > count) {
      heap.poll();
    }
  }

  /** The kept elements, best first. */
  List<T> bestFirst() {
    List<T> out = new ArrayList<>(heap);
    out.sort(bestFirst);
    return out;
  }
}
