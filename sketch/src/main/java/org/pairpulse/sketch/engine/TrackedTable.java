package org.pairpulse.sketch.engine;

import com.carrotsearch.hppc.LongIntHashMap;
import java.util.Arrays;

/**
 * A bounded table of tracked keys (items or pairs) with counts per window pane and per decay, ranked
 * by a Space-Saving min-heap on a rank weight decayed like the internal tracking decay.
 *
 * <h2>Layout</h2>
 * <pre>
 *   slot s in [0, capacity):  keys[s], labelA[s], labelB[s], hashA[s], hashB[s], admittedAtMillis[s]
 *   panes[paneIndex(s, c)]              count of the key in window pane c (panes of all windows, one
 *                                       after the other): an int, since window weights are integers
 *                                       (1, or the pair cap's step k); saturates at Integer.MAX_VALUE.
 *                                       Pane-major (c * capacity + s): the cells of the current panes of
 *                                       all slots lie together, so updates stay in cache and a pane that
 *                                       leaves is cleared in one run
 *   decays[decayIndex(s, d)]            count of the key in decay d (forward-decay units), slot-major:
 *                                       an update of a tracked key touches one line for all its decays
 *   admissionPane[s * windowCount + w]  newest pane of window w when s was admitted; Long.MIN_VALUE if
 *                                       the key was counted exactly from its first occurrence. Older
 *                                       panes are read from the pane sketches; the admission pane's cell
 *                                       began as its sketch estimate; newer panes are exact.
 *   admissionError[s * decayCount + d]  overcount bound inherited at admission in decay d (forward units)
 *   admissionBias[s * horizonCount + h] estimate − debiased estimate at admission (point value correction)
 *   classPanes[classPaneIndex(s, c, k)] items only: the part of pane cell c counted exactly in baskets of size
 *                                       class k (since admission; the admission pane's start, an estimate, has
 *                                       no class). Beside each other per slot and pane, pane-major like panes
 *   classDecays[classDecayIndex(s, d, k)] items only: the same for decay d (forward units)
 *   rank[s]     the key's Space-Saving rank weight in the tracking decay (forward units): for items its tracking
 *               count; for pairs each occurrence weighs as {@link PairRanking} says (see the engine)
 *   heap[i]     slot at heap position i of a 4-ary min-heap; heapPos[s] = i
 *   heapKey[i]  the rank of heap[i] when it was last placed: at most its current rank
 *               (ranks only grow between rescales, which scale both alike). Kept beside the heap
 *               positions so that a node's four children are compared within one cache line
 * </pre>
 *
 * <h2>Space-Saving with an admission test</h2>
 * The heap and the eviction rule are those of Space-Saving (Metwally, Agrawal, El Abbadi 2005), with
 * weighted increments; the weights are rank weights ({@link #rank}). A key that is not tracked enters only if the
 * count-min estimate of its rank weight exceeds the smallest tracked rank {@code m}, and then starts at
 * {@code min(estimate, m + w)}. That start is an upper bound of its true rank weight (an untracked key weighed at most
 * {@code m} before this update, and the estimate never undercounts), and the sum of tracked ranks never exceeds the
 * stream's total rank weight {@code W}, so {@code m ≤ W / capacity} and every key heavier than {@code W / capacity} is tracked:
 * the Space-Saving guarantee. The test only skips keys that could not have displaced the minimum, so it
 * saves the heap work without weakening the guarantee.
 *
 * <h2>A lazy heap</h2>
 * Ranks only grow, so a slot's heap key may lag behind its rank without breaking the one property the
 * heap must give, the minimum: {@link #minRank()} refreshes the root's key and sifts it down until the
 * root's key equals its rank; then it is at most every key, and every key at most its rank. An
 * increment therefore costs nothing here; the heap work is paid only when the minimum is asked for.
 *
 * <p>The engine fills cells at admission; this class keeps the structure consistent. Not thread-safe.
 */
final class TrackedTable {
  final int capacity;
  final int paneCells;
  final int trackingDecay;
  final int windowCount;
  final int decayCount;

  final long[] keys;
  final String[] labelA;
  final String[] labelB;
  final long[] hashA;
  final long[] hashB;
  final long[] admittedAtMillis;
  final int[] panes;
  final double[] decays;
  final long[] admissionPane;
  final double[] admissionError;
  /** Per slot and horizon: how far the admission estimate lies above its debiased value (point value = upper − bias). */
  final double[] admissionBias;
  final int horizonCount;
  /** Basket-size classes counted per slot (the item table; 0 for pairs). */
  final int classCount;
  final int[] classPanes;
  final double[] classDecays;
  /** Per slot: the Space-Saving rank weight (forward units of the tracking decay). */
  final double[] rank;
  /** Copy of each slot's rank, kept dense so the heap's comparisons stay in cache. */
  private final double[] heapKey;

  private final int[] heap;
  private final int[] heapPos;
  private final LongIntHashMap index;
  private int size;
  /** Slots below this have held a key at some time (their cells may be dirty); the rest are as allocated. */
  private int everUsed;

  long admissions;
  long evictions;
  long rejections;

  TrackedTable(int capacity, int paneCells, int trackingDecay, int windowCount, int decayCount, int horizonCount) {
    this(capacity, paneCells, trackingDecay, windowCount, decayCount, horizonCount, 0);
  }

  TrackedTable(int capacity, int paneCells, int trackingDecay, int windowCount, int decayCount, int horizonCount,
      int classCount) {
    this.capacity = capacity;
    this.classCount = classCount;
    this.classPanes = new int[capacity * paneCells * classCount];
    this.classDecays = new double[capacity * decayCount * classCount];
    this.horizonCount = horizonCount;
    this.admissionBias = new double[capacity * horizonCount];
    this.paneCells = paneCells;
    this.trackingDecay = trackingDecay;
    this.windowCount = windowCount;
    this.decayCount = decayCount;
    this.keys = new long[capacity];
    this.labelA = new String[capacity];
    this.labelB = new String[capacity];
    this.hashA = new long[capacity];
    this.hashB = new long[capacity];
    this.admittedAtMillis = new long[capacity];
    this.panes = new int[capacity * Math.max(paneCells, 1)];
    this.decays = new double[capacity * decayCount];
    this.admissionPane = new long[capacity * Math.max(windowCount, 1)];
    Arrays.fill(admissionPane, Long.MIN_VALUE); // "counted exactly from its first occurrence" until set
    this.admissionError = new double[capacity * Math.max(decayCount, 1)];
    this.heapKey = new double[capacity];
    this.rank = new double[capacity];
    this.heap = new int[capacity];
    this.heapPos = new int[capacity];
    this.index = new LongIntHashMap(capacity, 0.5); // low load: evictions remove keys often, and removal shifts clusters
  }

  int size() {
    return size;
  }

  boolean isFull() {
    return size == capacity;
  }

  /** Slot of {@code key}, or −1. */
  int find(long key) {
    return index.getOrDefault(key, -1);
  }

  /** Index of {@code slot}'s cell for window pane cell {@code paneCell} in {@link #panes}. */
  int paneIndex(int slot, int paneCell) {
    return paneCell * capacity + slot;
  }

  /** Index of {@code slot}'s count in decay {@code decay} in {@link #decays}: a slot's decays lie together. */
  int decayIndex(int slot, int decay) {
    return slot * decayCount + decay;
  }

  /** Index of {@code slot}'s count of size class {@code sizeClass} in window pane cell {@code paneCell}. */
  int classPaneIndex(int slot, int paneCell, int sizeClass) {
    return (paneCell * capacity + slot) * classCount + sizeClass;
  }

  /** Index of {@code slot}'s count of size class {@code sizeClass} in decay {@code decay}. */
  int classDecayIndex(int slot, int decay, int sizeClass) {
    return (slot * decayCount + decay) * classCount + sizeClass;
  }

  /** Zeroes {@code slot}'s class counts in pane cell {@code paneCell} (a key admitted with a sketch estimate there). */
  void clearClassPane(int slot, int paneCell) {
    int from = classPaneIndex(slot, paneCell, 0);
    Arrays.fill(classPanes, from, from + classCount, 0);
  }

  /** Zeroes {@code slot}'s class counts in every decay. */
  void clearClassDecays(int slot) {
    int from = classDecayIndex(slot, 0, 0);
    Arrays.fill(classDecays, from, from + decayCount * classCount, 0.0);
  }

  /** The rank weight of {@code slot}. */
  double rank(int slot) {
    return rank[slot];
  }

  /**
   * A lower bound of the smallest rank, without any heap work: the root's heap key (0 when
   * empty). A key whose estimate does not exceed it cannot exceed the minimum either.
   */
  double minRankLowerBound() {
    return size == 0 ? 0 : heapKey[0];
  }

  /** The smallest rank (0 when empty); brings the lazy heap's root up to date first. */
  double minRank() {
    if (size == 0) {
      return 0;
    }
    while (true) {
      double actual = rank(heap[0]);
      if (actual == heapKey[0]) {
        return actual;
      }
      heapKey[0] = actual;
      siftDown(0);
    }
  }

  /**
   * Takes a slot for {@code key}: a fresh one while not full (its cells are zero), else the minimum's
   * (evicting it; its cells keep the evicted key's values). Either way the caller then sets every decay
   * cell and, for an evicted slot, every window's admission pane and that pane's cell (cells of older
   * panes are never read, cells of newer panes are cleared when those panes start), and calls
   * {@link #placed(int)}.
   */
  int admit(long key, String a, String b, long ha, long hb, long eventMillis) {
    int slot;
    if (size < capacity) {
      slot = size;
      heap[size] = slot;
      heapPos[slot] = size;
      heapKey[size] = 0;
      size++;
      if (slot < everUsed) {
        clearSlot(slot); // held a key before a bulk load shrank the table; a slot never used is all zeros
      } else {
        everUsed = slot + 1;
      }
    } else {
      minRank(); // the root must be the true minimum
      slot = heap[0];
      index.remove(keys[slot]);
      evictions++;
      if (windowCount > 0) {
        Arrays.fill(admissionPane, slot * windowCount, slot * windowCount + windowCount, Long.MIN_VALUE);
      }
    }
    admissions++;
    keys[slot] = key;
    labelA[slot] = a;
    labelB[slot] = b;
    hashA[slot] = ha;
    hashB[slot] = hb;
    admittedAtMillis[slot] = eventMillis;
    index.put(key, slot);
    return slot;
  }

  private void clearSlot(int slot) {
    for (int c = 0; c < paneCells; c++) {
      panes[paneIndex(slot, c)] = 0;
    }
    for (int d = 0; d < decayCount; d++) {
      decays[decayIndex(slot, d)] = 0.0;
    }
    rank[slot] = 0.0;
    if (windowCount > 0) {
      Arrays.fill(admissionPane, slot * windowCount, slot * windowCount + windowCount, Long.MIN_VALUE);
    }
    if (decayCount > 0) {
      Arrays.fill(admissionError, slot * decayCount, slot * decayCount + decayCount, 0.0);
    }
    Arrays.fill(admissionBias, slot * horizonCount, slot * horizonCount + horizonCount, 0.0);
    for (int c = 0; classCount > 0 && c < paneCells; c++) {
      clearClassPane(slot, c);
    }
    if (classCount > 0) {
      clearClassDecays(slot);
    }
  }

  /** Restores heap order after {@code slot}'s rank was set at admission. */
  void placed(int slot) {
    int pos = heapPos[slot];
    heapKey[pos] = rank(slot);
    siftUp(pos);
    siftDown(heapPos[slot]);
  }

  /** Zeroes window pane cell {@code paneCell} of every slot (a pane left its window). */
  void clearPane(int paneCell) {
    Arrays.fill(panes, paneIndex(0, paneCell), paneIndex(0, paneCell) + capacity, 0);
    if (classCount > 0) {
      Arrays.fill(classPanes, classPaneIndex(0, paneCell, 0), classPaneIndex(0, paneCell + 1, 0), 0);
    }
  }

  /** Adds an integer window weight to a pane cell, saturating at Integer.MAX_VALUE. */
  void addToPane(int slot, int paneCell, double weight) {
    int index = paneIndex(slot, paneCell);
    panes[index] = (int) Math.min((long) panes[index] + (long) weight, Integer.MAX_VALUE);
  }

  /** Multiplies decay {@code decay}'s counts, admission errors and biases (and the ranks, for the tracking decay) by {@code factor} (a rescale). */
  void scaleDecay(int decay, int horizon, double factor) {
    for (int s = 0; s < size; s++) {
      decays[decayIndex(s, decay)] *= factor;
      admissionError[s * decayCount + decay] *= factor;
      admissionBias[s * horizonCount + horizon] *= factor;
      for (int c = 0; c < classCount; c++) {
        classDecays[classDecayIndex(s, decay, c)] *= factor;
      }
    }
    if (decay == trackingDecay) {
      for (int i = 0; i < size; i++) {
        heapKey[i] *= factor;
        rank[i] *= factor;
      }
    }
  }

  /** Rebuilds heap and index from the slot arrays (after a bulk load). */
  void rebuild(int newSize) {
    size = newSize;
    everUsed = Math.max(everUsed, newSize);
    index.clear();
    for (int s = 0; s < size; s++) {
      heap[s] = s;
      heapPos[s] = s;
      heapKey[s] = rank(s);
      index.put(keys[s], s);
    }
    for (int i = (size - 2) / 4; i >= 0; i--) {
      siftDown(i);
    }
  }

  private void siftUp(int pos) {
    int slot = heap[pos];
    double value = heapKey[pos];
    while (pos > 0) {
      int parent = (pos - 1) >>> 2;
      if (heapKey[parent] <= value) {
        break;
      }
      move(parent, pos);
      pos = parent;
    }
    heap[pos] = slot;
    heapKey[pos] = value;
    heapPos[slot] = pos;
  }

  private void siftDown(int pos) {
    int slot = heap[pos];
    double value = heapKey[pos];
    while (true) {
      int first = 4 * pos + 1;
      if (first >= size) {
        break;
      }
      int last = Math.min(first + 4, size);
      int child = first;
      double childValue = heapKey[first];
      for (int c = first + 1; c < last; c++) {
        if (heapKey[c] < childValue) {
          child = c;
          childValue = heapKey[c];
        }
      }
      if (value <= childValue) {
        break;
      }
      move(child, pos);
      pos = child;
    }
    heap[pos] = slot;
    heapKey[pos] = value;
    heapPos[slot] = pos;
  }

  /** Moves the node at heap position {@code from} to position {@code to}. */
  private void move(int from, int to) {
    int slot = heap[from];
    heap[to] = slot;
    heapKey[to] = heapKey[from];
    heapPos[slot] = to;
  }

  /**
   * Heap bytes of the fixed arrays plus the labels held; a label that is the same String as a tracked
   * item's in {@code shared} is counted there, not again.
   */
  long stateBytes(TrackedTable shared) {
    long bytes = 8L * keys.length * 4 // keys, hashA, hashB, admittedAtMillis
        + 4L * panes.length + 8L * decays.length + 8L * admissionPane.length + 8L * admissionError.length
        + 8L * admissionBias.length + 8L * heapKey.length + 4L * classPanes.length + 8L * classDecays.length
        + 4L * heap.length * 2 // heap, heapPos
        + 2L * 4 * capacity // label references (compressed oops)
        + (long) index.keys.length * 12; // hppc index: long keys + int values
    for (int s = 0; s < size; s++) {
      bytes += labelBytes(labelA[s], hashA[s], shared) + labelBytes(labelB[s], hashB[s], shared);
    }
    return bytes;
  }

  private static long labelBytes(String label, long hash, TrackedTable shared) {
    if (label == null) {
      return 0;
    }
    if (shared != null) {
      int slot = shared.find(hash);
      if (slot >= 0 && shared.labelA[slot] == label) {
        return 0;
      }
    }
    return 40L + label.length();
  }

  /**
   * True when the lazy heap's properties hold (for assertions in tests): heap order on the heap keys,
   * every heap key at most its slot's count, index and positions consistent.
   */
  boolean heapValid() {
    for (int i = 0; i < size; i++) {
      if ((i > 0 && heapKey[(i - 1) >>> 2] > heapKey[i]) || heapKey[i] > rank(heap[i])) {
        return false;
      }
    }
    for (int s = 0; s < size; s++) {
      if (heap[heapPos[s]] != s || index.getOrDefault(keys[s], -1) != s) {
        return false;
      }
    }
    return true;
  }
}
