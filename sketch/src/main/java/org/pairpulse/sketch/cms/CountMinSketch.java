package org.pairpulse.sketch.cms;

import java.io.DataInput;
import java.io.DataOutput;
import java.io.IOException;
import java.util.Arrays;
import org.pairpulse.sketch.hash.ItemHash;

/**
 * A count-min sketch of non-negative weights keyed by 64-bit keys (Cormode and Muthukrishnan 2005).
 *
 * <h2>Contract</h2>
 * For a key with true weight {@code f}, {@link #estimate} never undercounts ({@code estimate >= f}, as
 * long as weights are non-negative), and with probability at least {@code 1 - delta()} it overcounts by
 * at most {@link #maxError()} {@code = epsilon() * totalWeight()}. {@link #lowerBound} and
 * {@link #upperBound} bracket the true weight under that probability.
 *
 * <h2>Design</h2>
 * <pre>
 *   counters: double[depth * width], row r occupies [r * width, (r + 1) * width)
 *             (a sketch made by {@link #interleaved} shares one array with n − 1 others: its counter i
 *             lives at i * n + k, so the k-th sketches' counters for one column lie side by side and
 *             updating all n with one key touches each row's cache line once)
 *   width  = 2^k >= e / epsilon      (Cormode and Muthukrishnan 2005, Theorem 1)
 *   depth  = ceil(ln(1 / delta))
 *   column of row r = low bits of x_r, x_0 = key ^ seed, x_{r+1} = mix64(x_r + golden ratio constant)
 * </pre>
 * Each row hashes through its own application of a bijective 64-bit mixer, so two keys that collide
 * in one row are not forced to collide in the others (double hashing, h1 + r·h2, makes a collision in
 * every row as likely as in two, 1/width², which repeated across panes showed as false alerts). Counters are
 * doubles so that forward-decayed weights and integer weights above 2^24 stay exact enough: an
 * integer-valued counter is exact up to 2^53.
 *
 * <p>Not thread-safe: one writer at a time; copy before handing to another thread.
 *
 * <ol>
 *   <li>G. Cormode, S. Muthukrishnan. An improved data stream summary: the count-min sketch and its
 *       applications. J. Algorithms 55(1), 2005.</li>
 *   <li>C. Estan, G. Varghese. New directions in traffic measurement and accounting. SIGCOMM 2002.</li>
 * </ol>
 */
public final class CountMinSketch {
  /** Odd constant (the golden ratio) added before each row's mix, so each row hashes a different input. */
  private static final long ROW_STEP = 0x9E37_79B9_7F4A_7C15L;

  private final int width;
  private final int depth;
  private final int mask;
  private final long seed;
  private final UpdateRule rule;
  private final double[] counters;
  /** Distance between this sketch's consecutive counters in {@link #counters}: 1, or n when interleaved. */
  private final int stride;
  /** Position of this sketch's first counter in {@link #counters}. */
  private final int offset;
  /** 1 / (width − 1): a row counter's expected share of the other keys' weight, per unit of that weight. */
  private final double othersShare;
  /** Reused by {@link #debiasedEstimate} (the sketch has one writer; readers use published tables). */
  private final double[] scratch;
  /** Reused by {@link #debiasedEstimate}: the key's row hashes. */
  private final long[] rowScratch;
  private double totalWeight;

  /**
   * @param width number of counters per row, a power of two ≥ 2
   * @param depth number of rows, 1..32
   */
  public CountMinSketch(int width, int depth, UpdateRule rule, long seed) {
    this(width, depth, rule, seed, null, 1, 0);
  }

  private CountMinSketch(int width, int depth, UpdateRule rule, long seed, double[] shared, int stride, int offset) {
    if (width < 2 || Integer.bitCount(width) != 1) {
      throw new IllegalArgumentException("width must be a power of two >= 2, got " + width);
    }
    if (depth < 1 || depth > 32) {
      throw new IllegalArgumentException("depth must be in 1..32, got " + depth);
    }
    if ((long) width * depth > (1L << 28)) {
      throw new IllegalArgumentException("width * depth too large: " + width + " * " + depth);
    }
    this.width = width;
    this.depth = depth;
    this.mask = width - 1;
    this.seed = seed;
    this.rule = rule;
    this.counters = shared != null ? shared : new double[width * depth];
    this.stride = stride;
    this.offset = offset;
    this.othersShare = 1.0 / (width - 1);
    this.scratch = new double[depth];
    this.rowScratch = new long[depth];
  }

  /** A sketch sized by the Cormode–Muthukrishnan formulas for error {@code epsilon} and failure {@code delta}. */
  public static CountMinSketch forError(double epsilon, double delta, UpdateRule rule, long seed) {
    return new CountMinSketch(widthFor(epsilon), depthFor(delta), rule, seed);
  }

  /**
   * {@code n} sketches of one shape and seed whose counters share one array, column by column (see the
   * class comment). Each behaves exactly as a sketch of its own; a caller that adds the same key to all
   * of them (horizons of one stream) pays each row's cache miss once instead of {@code n} times.
   */
  public static CountMinSketch[] interleaved(int n, int width, int depth, UpdateRule rule, long seed) {
    if (n < 1 || (long) n * width * depth > (1L << 28)) {
      throw new IllegalArgumentException("cannot interleave " + n + " sketches of " + width + " x " + depth);
    }
    double[] shared = new double[n * width * depth];
    CountMinSketch[] sketches = new CountMinSketch[n];
    for (int k = 0; k < n; k++) {
      sketches[k] = new CountMinSketch(width, depth, rule, seed, shared, n, k);
    }
    return sketches;
  }

  /** Counters per row for relative error {@code epsilon}: ⌈e/ε⌉ rounded up to a power of two. */
  public static int widthFor(double epsilon) {
    if (!(epsilon > 0 && epsilon < 1)) {
      throw new IllegalArgumentException("epsilon must be in (0, 1), got " + epsilon);
    }
    long minWidth = (long) Math.ceil(Math.E / epsilon);
    if (minWidth > (1L << 26)) {
      throw new IllegalArgumentException("epsilon " + epsilon + " needs more than 2^26 counters per row");
    }
    return Math.max(2, Integer.highestOneBit((int) minWidth - 1) << 1);
  }

  /** Rows for failure probability {@code delta}: ⌈ln(1/δ)⌉. */
  public static int depthFor(double delta) {
    if (!(delta > 0 && delta < 1)) {
      throw new IllegalArgumentException("delta must be in (0, 1), got " + delta);
    }
    return Math.max(1, (int) Math.ceil(Math.log(1 / delta)));
  }

  /** Adds {@code weight ≥ 0} to {@code key}. */
  public void add(long key, double weight) {
    assert weight >= 0 : "negative weight " + weight;
    long h = key ^ seed;
    if (rule == UpdateRule.LINEAR) {
      for (int row = 0, base = 0; row < depth; row++, base += width) {
        h = ItemHash.mix64(h + ROW_STEP);
        counters[(base + ((int) h & mask)) * stride + this.offset] += weight;
      }
    } else {
      double target = minOf(key) + weight;
      for (int row = 0, base = 0; row < depth; row++, base += width) {
        h = ItemHash.mix64(h + ROW_STEP);
        int index = (base + ((int) h & mask)) * stride + this.offset;
        if (counters[index] < target) {
          counters[index] = target;
        }
      }
    }
    totalWeight += weight;
  }

  /**
   * Writes the key's per-row hashes into {@code rows[offset .. offset + depth)}. Sketches with the same
   * seed and depth share them whatever their width (each takes the low bits it needs), so a caller that
   * updates several such sketches with one key hashes it once and uses the {@code …Hashed} methods.
   */
  public void rowHashes(long key, long[] rows, int offset) {
    long h = key ^ seed;
    for (int row = 0; row < depth; row++) {
      h = ItemHash.mix64(h + ROW_STEP);
      rows[offset + row] = h;
    }
  }

  /**
   * {@link #add} with the key's row hashes from {@link #rowHashes} (of a sketch with equal seed and depth).
   * Returns the key's {@link #estimate} after the update, read from the counters just written (free,
   * while they are in cache).
   */
  public double addHashed(long[] rows, int offset, double weight) {
    assert weight >= 0 : "negative weight " + weight;
    totalWeight += weight;
    if (rule == UpdateRule.LINEAR && depth == 4) { // the default depth, unrolled: four independent updates
      int i0 = (((int) rows[offset] & mask)) * stride + this.offset;
      int i1 = (width + ((int) rows[offset + 1] & mask)) * stride + this.offset;
      int i2 = (2 * width + ((int) rows[offset + 2] & mask)) * stride + this.offset;
      int i3 = (3 * width + ((int) rows[offset + 3] & mask)) * stride + this.offset;
      double v0 = counters[i0] + weight;
      double v1 = counters[i1] + weight;
      double v2 = counters[i2] + weight;
      double v3 = counters[i3] + weight;
      counters[i0] = v0;
      counters[i1] = v1;
      counters[i2] = v2;
      counters[i3] = v3;
      return Math.min(Math.min(v0, v1), Math.min(v2, v3));
    }
    if (rule == UpdateRule.LINEAR) {
      double min = Double.POSITIVE_INFINITY;
      for (int row = 0, base = 0; row < depth; row++, base += width) {
        int index = (base + ((int) rows[offset + row] & mask)) * stride + this.offset;
        double value = counters[index] + weight;
        counters[index] = value;
        if (value < min) {
          min = value;
        }
      }
      return min;
    }
    double target = estimateHashed(rows, offset) + weight;
    for (int row = 0, base = 0; row < depth; row++, base += width) {
      int index = (base + ((int) rows[offset + row] & mask)) * stride + this.offset;
      if (counters[index] < target) {
        counters[index] = target;
      }
    }
    return target; // the smallest counter was target − weight and is now target; none is below
  }

  /** {@link #estimate} with the key's row hashes from {@link #rowHashes}. */
  public double estimateHashed(long[] rows, int offset) {
    if (depth == 4) {
      return Math.min(Math.min(counterAt(rows, offset, 0), counterAt(rows, offset, 1)),
          Math.min(counterAt(rows, offset, 2), counterAt(rows, offset, 3)));
    }
    double min = Double.POSITIVE_INFINITY;
    for (int row = 0, base = 0; row < depth; row++, base += width) {
      double value = counters[(base + ((int) rows[offset + row] & mask)) * stride + this.offset];
      if (value < min) {
        min = value;
      }
    }
    return min;
  }

  /** {@link #debiasedEstimate} with the key's row hashes from {@link #rowHashes}. */
  public double debiasedEstimateHashed(long[] rows, int offset) {
    if (rule != UpdateRule.LINEAR) {
      return estimateHashed(rows, offset);
    }
    // the correction c − (W − c)/(width − 1) grows with c, so the median of corrected counters is the
    // corrected median counter: one pass for min and median, no per-row division
    double upper;
    double median;
    if (depth == 4) {
      double c0 = counterAt(rows, offset, 0);
      double c1 = counterAt(rows, offset, 1);
      double c2 = counterAt(rows, offset, 2);
      double c3 = counterAt(rows, offset, 3);
      double low = Math.min(Math.min(c0, c1), Math.min(c2, c3));
      double high = Math.max(Math.max(c0, c1), Math.max(c2, c3));
      upper = low;
      median = 0.5 * ((c0 + c1 + c2 + c3) - low - high);
    } else {
      double[] sorted = scratch;
      for (int row = 0; row < depth; row++) {
        double counter = counterAt(rows, offset, row);
        int j = row - 1; // insertion sort: depth is small
        while (j >= 0 && sorted[j] > counter) {
          sorted[j + 1] = sorted[j];
          j--;
        }
        sorted[j + 1] = counter;
      }
      upper = sorted[0];
      median = (depth & 1) == 1 ? sorted[depth / 2] : 0.5 * (sorted[depth / 2 - 1] + sorted[depth / 2]);
    }
    double corrected = median - (totalWeight - median) * othersShare;
    return Math.max(Math.max(0, upper - maxError()), Math.min(upper, corrected));
  }

  private double counterAt(long[] rows, int offset, int row) {
    return counters[(row * width + ((int) rows[offset + row] & mask)) * stride + this.offset];
  }


  /** The point estimate: the smallest counter of the key's columns. Never below the true weight. */
  public double estimate(long key) {
    return minOf(key);
  }

  private double minOf(long key) {
    double min = Double.POSITIVE_INFINITY;
    long h = key ^ seed;
    for (int row = 0, base = 0; row < depth; row++, base += width) {
      h = ItemHash.mix64(h + ROW_STEP);
      double value = counters[(base + ((int) h & mask)) * stride + this.offset];
      if (value < min) {
        min = value;
      }
    }
    return min;
  }

  /**
   * A less biased point estimate for keys in the tail: each row's counter less the row's expected
   * share of everybody else's weight, {@code c − (W − c)/(width − 1)}, the median over rows, clamped to
   * [{@link #lowerBound}, {@link #upperBound}] (the count-mean-min estimate of Deng and Rafiei 2007,
   * "New estimation algorithms for streaming data: Count-min can do more"). May undercount: use it as a
   * point value, never as a bound. For a conservative-update sketch it returns {@link #estimate}, since
   * its counters do not carry the additive noise the correction assumes.
   */
  public double debiasedEstimate(long key) {
    rowHashes(key, rowScratch, 0);
    return debiasedEstimateHashed(rowScratch, 0);
  }


  /** Same as {@link #estimate}: the count-min estimate is an upper bound. */
  public double upperBound(long key) {
    return estimate(key);
  }

  /** {@code max(0, estimate − maxError())}: below the true weight with probability ≥ 1 − δ. */
  public double lowerBound(long key) {
    return Math.max(0, estimate(key) - maxError());
  }

  /** ε·W: the overcount bound that holds with probability ≥ 1 − δ. */
  public double maxError() {
    return epsilon() * totalWeight;
  }

  /** The ε this sketch guarantees: e / width. */
  public double epsilon() {
    return Math.E / width;
  }

  /** The δ this sketch guarantees: e^−depth. */
  public double delta() {
    return Math.exp(-depth);
  }

  /** W: the sum of all weights added (after merges, subtractions and scaling). */
  public double totalWeight() {
    return totalWeight;
  }

  public int width() {
    return width;
  }

  public int depth() {
    return depth;
  }

  public long seed() {
    return seed;
  }

  public UpdateRule rule() {
    return rule;
  }

  /** Adds {@code other} counter by counter; both must share width, depth and seed. */
  public void merge(CountMinSketch other) {
    requireCompatible(other);
    for (int i = 0, n = width * depth; i < n; i++) {
      counters[i * stride + offset] += other.counters[i * other.stride + other.offset];
    }
    totalWeight += other.totalWeight;
  }

  /**
   * Subtracts {@code other}, which must have been built from a sub-stream of this sketch's stream.
   * Linear sketches only: a conservative-update sketch is not a sum of its parts.
   */
  public void subtract(CountMinSketch other) {
    requireCompatible(other);
    if (rule != UpdateRule.LINEAR || other.rule != UpdateRule.LINEAR) {
      throw new IllegalStateException("only linear count-min sketches can be subtracted");
    }
    for (int i = 0, n = width * depth; i < n; i++) {
      counters[i * stride + offset] -= other.counters[i * other.stride + other.offset];
    }
    totalWeight -= other.totalWeight;
  }

  /** Multiplies every counter and the total weight by {@code factor > 0} (exact for powers of two). */
  public void scale(double factor) {
    if (!(factor > 0) || Double.isInfinite(factor)) {
      throw new IllegalArgumentException("scale factor must be positive and finite, got " + factor);
    }
    for (int i = 0, n = width * depth; i < n; i++) {
      counters[i * stride + offset] *= factor;
    }
    totalWeight *= factor;
  }

  public void clear() {
    if (stride == 1) {
      Arrays.fill(counters, 0.0);
    } else {
      for (int i = 0, n = width * depth; i < n; i++) {
        counters[i * stride + offset] = 0.0;
      }
    }
    totalWeight = 0;
  }

  public CountMinSketch copy() {
    CountMinSketch copy = new CountMinSketch(width, depth, rule, seed);
    for (int i = 0, n = width * depth; i < n; i++) {
      copy.counters[i] = counters[i * stride + offset];
    }
    copy.totalWeight = totalWeight;
    return copy;
  }

  /** Heap bytes of the counters (the only part that grows with the configuration). */
  public long stateBytes() {
    return 16L + 8L * width * depth + 48;
  }

  /** True when both sketches have the same shape, seed, rule and identical counters. */
  public boolean sameCountersAs(CountMinSketch other) {
    return isCompatible(other) && rule == other.rule
        && sameCounters(other)
        && Double.compare(totalWeight, other.totalWeight) == 0;
  }

  private boolean sameCounters(CountMinSketch other) {
    for (int i = 0, n = width * depth; i < n; i++) {
      if (Double.compare(counters[i * stride + offset], other.counters[i * other.stride + other.offset]) != 0) {
        return false;
      }
    }
    return true;
  }

  private boolean isCompatible(CountMinSketch other) {
    return width == other.width && depth == other.depth && seed == other.seed;
  }

  private void requireCompatible(CountMinSketch other) {
    if (!isCompatible(other)) {
      throw new IllegalArgumentException(
          "incompatible count-min sketches: " + width + "x" + depth + " seed " + seed
              + " vs " + other.width + "x" + other.depth + " seed " + other.seed);
    }
  }

  /** Writes counters and total; the shape is written by the owner of the sketch. */
  public void writeCounters(DataOutput out) throws IOException {
    out.writeDouble(totalWeight);
    for (int i = 0, n = width * depth; i < n; i++) {
      out.writeDouble(counters[i * stride + offset]);
    }
  }

  /** Reads what {@link #writeCounters} wrote into this (same-shape) sketch. */
  public void readCounters(DataInput in) throws IOException {
    totalWeight = in.readDouble();
    for (int i = 0, n = width * depth; i < n; i++) {
      counters[i * stride + offset] = in.readDouble();
    }
  }
}
