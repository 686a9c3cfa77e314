package org.pairpulse.ops.bench;

import com.carrotsearch.hppc.LongDoubleHashMap;
import com.carrotsearch.hppc.LongIntHashMap;
import com.carrotsearch.hppc.cursors.LongDoubleCursor;
import com.carrotsearch.hppc.cursors.LongIntCursor;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The exact counts the benchmark compares the engine with: N, n_a and n_ab for every horizon, with no
 * sketch and no bound on memory. It is the oracle of the accuracy phase (and is itself tested against a
 * plain recomputation, see the tests).
 *
 * <h2>Semantics (the same as {@code PairEngine}'s)</h2>
 * <ul>
 *   <li>A basket's distinct items count once; each unordered pair of them counts once. Every pair is
 *       counted: the engine's pair cap ({@code maxPairsPerBasket}) samples baskets above it, so compare
 *       on streams whose baskets stay under the cap (the benchmark's hold at most 8 items).</li>
 *   <li>Window: a ring of panes; pane {@code q = floor(t / paneMillis)}; the window holds the
 *       {@code paneCount} panes up to the newest pane seen, and a pane leaves whole. A basket whose pane
 *       has already left is not counted in that window.</li>
 *   <li>Decay: forward decay with landmark {@code L}, a multiple of the half-life: a basket at {@code t}
 *       adds {@code 2^((t − L) / halfLife)}; values as of the watermark divide by {@code 2^((wm − L) /
 *       halfLife)}; the landmark moves by whole half-lives (an exact rescale by {@code 2^−k}) once a weight
 *       would pass {@code 2^64}.</li>
 * </ul>
 *
 * <h2>Layout and size</h2>
 * Items are int ids; a pair is the long {@code (min << 32) | max}, exact and collision-free. Each window
 * pane holds two hppc {@link LongIntHashMap}s (items, pairs) with integer counts; a decay holds two
 * {@link LongDoubleHashMap}s. These primitive open-addressing maps are the most compact honest exact
 * structure; {@link #stateBytes()} is the bytes of their key and value arrays, measured like the
 * engine's {@code stateBytes()} (array payloads, no object headers). A pane that leaves its window drops
 * its maps, so only live panes count.
 *
 * <p>Not thread-safe.
 */
public final class ExactCounts {
  /** Rescale the decays once the newest weight would exceed 2^64 (as the engine does). */
  static final int RESCALE_AFTER_HALF_LIVES = 64;

  private final Map<String, Horizon> horizons = new LinkedHashMap<>();
  private long watermarkMillis = Long.MIN_VALUE;
  private int[] distinct = new int[16];

  public ExactCounts(List<HorizonSpec> specs) {
    for (HorizonSpec spec : specs) {
      Horizon horizon = spec.isWindow() ? new Window(spec) : new Decay(spec);
      if (horizons.put(spec.name(), horizon) != null) {
        throw new IllegalArgumentException("duplicate horizon name '" + spec.name() + "'");
      }
    }
  }

  /** The pair key of items {@code a != b} (order-independent). */
  public static long pairKey(int a, int b) {
    int low = Math.min(a, b);
    int high = Math.max(a, b);
    return ((long) low << 32) | (high & 0xFFFF_FFFFL);
  }

  /** The smaller item of a pair key. */
  public static int lowItem(long pairKey) {
    return (int) (pairKey >>> 32);
  }

  /** The larger item of a pair key. */
  public static int highItem(long pairKey) {
    return (int) pairKey;
  }

  /**
   * Adds a basket of {@code count} item ids ({@code items[0..count)}, each {@code >= 0}; duplicates count
   * once) at {@code eventMillis}.
   */
  public void addBasket(long eventMillis, int[] items, int count) {
    int n = distinctItems(items, count);
    if (n == 0) {
      return;
    }
    if (eventMillis > watermarkMillis) {
      watermarkMillis = eventMillis;
    }
    for (Horizon horizon : horizons.values()) {
      horizon.add(eventMillis, distinct, n);
    }
  }

  private int distinctItems(int[] items, int count) {
    if (distinct.length < count) {
      distinct = new int[Integer.highestOneBit(count) << 1];
    }
    int n = 0;
    for (int i = 0; i < count; i++) {
      int item = items[i];
      if (item < 0) {
        throw new IllegalArgumentException("item ids must be >= 0, got " + item);
      }
      boolean seen = false;
      for (int j = 0; j < n; j++) {
        if (distinct[j] == item) {
          seen = true;
          break;
        }
      }
      if (!seen) {
        distinct[n++] = item;
      }
    }
    return n;
  }

  public long watermarkMillis() {
    return watermarkMillis;
  }

  /** N in {@code horizon} as of the watermark. */
  public double baskets(String horizon) {
    return horizon(horizon).baskets(watermarkMillis);
  }

  /** n_a in {@code horizon} as of the watermark. */
  public double itemCount(String horizon, int item) {
    return horizon(horizon).count(false, item, watermarkMillis);
  }

  /** n_ab in {@code horizon} as of the watermark. */
  public double pairCount(String horizon, int a, int b) {
    return horizon(horizon).count(true, pairKey(a, b), watermarkMillis);
  }

  /** Every item with its n_a in {@code horizon} as of the watermark (a new map). */
  public LongDoubleHashMap itemCounts(String horizon) {
    return horizon(horizon).totals(false, watermarkMillis);
  }

  /** Every pair (key: {@link #pairKey}) with its n_ab in {@code horizon} as of the watermark (a new map). */
  public LongDoubleHashMap pairCounts(String horizon) {
    return horizon(horizon).totals(true, watermarkMillis);
  }

  /** Bytes of the key and value arrays of every live map (see the class comment). */
  public long stateBytes() {
    long bytes = 0;
    for (Horizon horizon : horizons.values()) {
      bytes += horizon.stateBytes();
    }
    return bytes;
  }

  /** {@link #stateBytes()} of one horizon. */
  public long stateBytes(String horizon) {
    return horizon(horizon).stateBytes();
  }

  private Horizon horizon(String name) {
    Horizon horizon = horizons.get(name);
    if (horizon == null) {
      throw new IllegalArgumentException("unknown horizon '" + name + "'; known: " + horizons.keySet());
    }
    return horizon;
  }

  static long bytesOf(LongIntHashMap map) {
    return 8L * map.keys.length + 4L * map.values.length;
  }

  static long bytesOf(LongDoubleHashMap map) {
    return 8L * map.keys.length + 8L * map.values.length;
  }

  private interface Horizon {
    void add(long eventMillis, int[] items, int n);

    double baskets(long asOfMillis);

    double count(boolean pair, long key, long asOfMillis);

    LongDoubleHashMap totals(boolean pair, long asOfMillis);

    long stateBytes();
  }

  /** A window: a ring of panes, each with exact integer counts. */
  private static final class Window implements Horizon {
    private final long paneMillis;
    private final int paneCount;
    private final long[] paneOfSlot;
    private final long[] basketsOfSlot;
    private final LongIntHashMap[] itemsOfSlot;
    private final LongIntHashMap[] pairsOfSlot;
    private long newestPane = Long.MIN_VALUE;

    Window(HorizonSpec spec) {
      this.paneMillis = spec.paneMillis();
      this.paneCount = spec.paneCount();
      this.paneOfSlot = new long[paneCount];
      this.basketsOfSlot = new long[paneCount];
      this.itemsOfSlot = new LongIntHashMap[paneCount];
      this.pairsOfSlot = new LongIntHashMap[paneCount];
      for (int slot = 0; slot < paneCount; slot++) {
        paneOfSlot[slot] = Long.MIN_VALUE;
        itemsOfSlot[slot] = new LongIntHashMap();
        pairsOfSlot[slot] = new LongIntHashMap();
      }
    }

    @Override
    public void add(long eventMillis, int[] items, int n) {
      long pane = Math.floorDiv(eventMillis, paneMillis);
      if (newestPane == Long.MIN_VALUE || pane > newestPane) {
        advance(pane);
      }
      if (pane < oldestLivePane()) {
        return; // the pane has left the window
      }
      int slot = slotOf(pane);
      basketsOfSlot[slot]++;
      LongIntHashMap itemCounts = itemsOfSlot[slot];
      LongIntHashMap pairCounts = pairsOfSlot[slot];
      for (int i = 0; i < n; i++) {
        itemCounts.addTo(items[i], 1);
        for (int j = i + 1; j < n; j++) {
          pairCounts.addTo(pairKey(items[i], items[j]), 1);
        }
      }
    }

    /** Starts pane {@code pane}: the ring slots of the panes that leave get new, empty maps. */
    private void advance(long pane) {
      long first = newestPane == Long.MIN_VALUE ? pane - paneCount + 1 : Math.max(newestPane + 1, pane - paneCount + 1);
      for (long q = first; q <= pane; q++) {
        int slot = slotOf(q);
        paneOfSlot[slot] = q;
        basketsOfSlot[slot] = 0;
        itemsOfSlot[slot] = new LongIntHashMap();
        pairsOfSlot[slot] = new LongIntHashMap();
      }
      newestPane = pane;
    }

    private long oldestLivePane() {
      return newestPane - paneCount + 1;
    }

    private int slotOf(long pane) {
      return (int) Math.floorMod(pane, (long) paneCount);
    }

    private boolean live(int slot) {
      return newestPane != Long.MIN_VALUE && paneOfSlot[slot] != Long.MIN_VALUE && paneOfSlot[slot] >= oldestLivePane();
    }

    @Override
    public double baskets(long asOfMillis) {
      long sum = 0;
      for (int slot = 0; slot < paneCount; slot++) {
        if (live(slot)) {
          sum += basketsOfSlot[slot];
        }
      }
      return sum;
    }

    @Override
    public double count(boolean pair, long key, long asOfMillis) {
      long sum = 0;
      for (int slot = 0; slot < paneCount; slot++) {
        if (live(slot)) {
          sum += (pair ? pairsOfSlot[slot] : itemsOfSlot[slot]).getOrDefault(key, 0);
        }
      }
      return sum;
    }

    @Override
    public LongDoubleHashMap totals(boolean pair, long asOfMillis) {
      LongDoubleHashMap totals = new LongDoubleHashMap();
      for (int slot = 0; slot < paneCount; slot++) {
        if (!live(slot)) {
          continue;
        }
        for (LongIntCursor entry : pair ? pairsOfSlot[slot] : itemsOfSlot[slot]) {
          totals.addTo(entry.key, entry.value);
        }
      }
      return totals;
    }

    @Override
    public long stateBytes() {
      long bytes = 0;
      for (int slot = 0; slot < paneCount; slot++) {
        if (live(slot)) {
          bytes += bytesOf(itemsOfSlot[slot]) + bytesOf(pairsOfSlot[slot]);
        }
      }
      return bytes;
    }
  }

  /** A decay: forward-decayed weights of every item and pair ever seen. */
  private static final class Decay implements Horizon {
    private final long halfLifeMillis;
    private final LongDoubleHashMap items = new LongDoubleHashMap();
    private final LongDoubleHashMap pairs = new LongDoubleHashMap();
    private double baskets;
    private long landmarkMillis = Long.MIN_VALUE;

    Decay(HorizonSpec spec) {
      this.halfLifeMillis = spec.halfLifeMillis();
    }

    @Override
    public void add(long eventMillis, int[] itemIds, int n) {
      long landmark = Math.floorDiv(eventMillis, halfLifeMillis) * halfLifeMillis;
      if (landmarkMillis == Long.MIN_VALUE) {
        landmarkMillis = landmark;
      } else if (eventMillis - landmarkMillis > RESCALE_AFTER_HALF_LIVES * halfLifeMillis) {
        rescale(landmark);
      }
      double weight = weightAt(eventMillis);
      baskets += weight;
      for (int i = 0; i < n; i++) {
        items.addTo(itemIds[i], weight);
        for (int j = i + 1; j < n; j++) {
          pairs.addTo(pairKey(itemIds[i], itemIds[j]), weight);
        }
      }
    }

    /** Moves the landmark forward by whole half-lives: every stored value times 2^−k, exact in binary. */
    private void rescale(long newLandmarkMillis) {
      long halfLives = (newLandmarkMillis - landmarkMillis) / halfLifeMillis;
      double factor = Math.scalb(1.0, (int) -Math.min(halfLives, 2000)); // 0 past ~1075 half-lives: exact
      scale(items.values, factor);
      scale(pairs.values, factor);
      baskets *= factor;
      landmarkMillis = newLandmarkMillis;
    }

    /** Scales a map's value array in place (its empty slots hold 0, which stays 0). */
    private static void scale(double[] values, double factor) {
      for (int i = 0; i < values.length; i++) {
        values[i] *= factor;
      }
    }

    private double weightAt(long millis) {
      return Math.pow(2.0, (double) (millis - landmarkMillis) / halfLifeMillis);
    }

    private double scaleAt(long asOfMillis) {
      return landmarkMillis == Long.MIN_VALUE ? 1.0 : weightAt(asOfMillis);
    }

    @Override
    public double baskets(long asOfMillis) {
      return baskets / scaleAt(asOfMillis);
    }

    @Override
    public double count(boolean pair, long key, long asOfMillis) {
      return (pair ? pairs : items).getOrDefault(key, 0.0) / scaleAt(asOfMillis);
    }

    @Override
    public LongDoubleHashMap totals(boolean pair, long asOfMillis) {
      LongDoubleHashMap source = pair ? pairs : items;
      double scale = scaleAt(asOfMillis);
      LongDoubleHashMap totals = new LongDoubleHashMap(source.size());
      for (LongDoubleCursor entry : source) {
        totals.put(entry.key, entry.value / scale);
      }
      return totals;
    }

    @Override
    public long stateBytes() {
      return bytesOf(items) + bytesOf(pairs);
    }
  }
}
