package org.pairpulse.sketch.stats;

import java.util.Arrays;
import java.util.StringJoiner;

/**
 * Basket-size classes: the strata of the size-aware null model (see {@link MantelHaenszel}). A basket's
 * size is its number of distinct items; class c holds the sizes from {@code lowerBound(c)} up to
 * {@code lowerBound(c + 1) − 1}, the last class everything from its lower bound up.
 *
 * <h2>The default: 1, 2, 3, 4–5, 6–9, 10–15, 16–24, 25–39, 40+</h2>
 * Why stratify at all: a basket of 12 items holds 66 pairs, a basket of 2 items holds one. Under plain
 * independence (one class) every item is more likely to sit in a large basket, so every pair of
 * popular items looks associated (lift above 1) merely because both ride in large baskets. Within a
 * class the baskets have about the same room for items, so independence within a class is the
 * question a promotion asks. The small sizes, each its own class, carry most baskets and differ most
 * from each other in room per item (a pair is one of 1, 3 or 6 pairs); from 4 on the classes grow
 * geometrically, each spanning sizes within a factor of about 1.6 (4–5, 6–9, 10–15, 16–24, 25–39), and 40 and
 * more form the tail.
 *
 * <p>Why the tail is split: inside a class the null model reads each item's share of the class's baskets and
 * corrects for the spread of sizes by ρ_c = E[k(k − 1)]/E[k]² ({@code SizeStrata}), which assumes that an item's
 * presence grows with the basket's size. A popular item does not keep growing: it is in nearly every basket of 30
 * items and in many of 6, so with one open class 6+ (sizes 6 to 60 on the benchmark's heavy tail) the expected
 * count of two popular items came out above what independence gives: on {@code bench rules}' heavy tail the median
 * size-adjusted lift of the pairs among the 20 most popular items, all independent, was 0.90 (1.01 with the tail
 * split; textbook 2.88), and the suggestions' posterior ranking pushed popular items down (hit@10 0.302 against the
 * textbook model's 0.314; with the tail split 0.346 against 0.322, same baskets). Narrow classes keep
 * ρ_c near (k − 1)/k and the presence rates homogeneous, as the Mantel–Haenszel form wants of its strata. Each class
 * costs one count per tracked item and window pane (memory, not work: a basket updates one class); configure
 * others where baskets are larger.
 *
 * <p>Class 0 must start at 1. A class whose sizes are all 1 holds no pair: it counts in N, the item
 * counts, support and confidence, but adds nothing to the expected pair count (a structural zero).
 *
 * <p>Immutable; {@link #classOf} is a table lookup for sizes up to {@value #LOOKUP_SIZES}.
 */
public final class SizeClasses {
  /** Most classes: each costs one count per tracked item and cell. */
  public static final int MAX_CLASSES = 16;
  private static final int LOOKUP_SIZES = 64;
  private static final SizeClasses DEFAULTS = of(1, 2, 3, 4, 6, 10, 16, 25, 40);
  private static final SizeClasses SINGLE = of(1);

  private final int[] lowerBounds;
  private final byte[] lookup;

  private SizeClasses(int[] lowerBounds) {
    this.lowerBounds = lowerBounds;
    this.lookup = new byte[LOOKUP_SIZES + 1];
    for (int size = 1; size <= LOOKUP_SIZES; size++) {
      lookup[size] = (byte) search(size);
    }
  }

  /**
   * Classes starting at these sizes.
   *
   * @throws IllegalArgumentException unless the bounds start at 1, increase strictly and number at most
   *     {@value #MAX_CLASSES}
   */
  public static SizeClasses of(int... lowerBounds) {
    if (lowerBounds.length == 0 || lowerBounds.length > MAX_CLASSES || lowerBounds[0] != 1) {
      throw new IllegalArgumentException("size classes need 1 to " + MAX_CLASSES + " lower bounds starting at 1, got "
          + Arrays.toString(lowerBounds));
    }
    for (int c = 1; c < lowerBounds.length; c++) {
      if (lowerBounds[c] <= lowerBounds[c - 1]) {
        throw new IllegalArgumentException("size class bounds must increase strictly, got " + Arrays.toString(lowerBounds));
      }
    }
    return new SizeClasses(lowerBounds.clone());
  }

  /**
   * Parses the form {@link #toString()} writes: {@code "1,2,3,4-5,6+"} (each class a size, a range or the
   * open tail), or just the lower bounds {@code "1,2,3,4,6"}.
   *
   * @throws IllegalArgumentException on anything else, or ranges that leave a gap
   */
  public static SizeClasses parse(String text) {
    String[] parts = text.trim().split("\\s*,\\s*");
    int[] bounds = new int[parts.length];
    for (int c = 0; c < parts.length; c++) {
      String part = parts[c].endsWith("+") ? parts[c].substring(0, parts[c].length() - 1) : parts[c];
      int dash = part.indexOf('-');
      try {
        bounds[c] = Integer.parseInt(dash < 0 ? part : part.substring(0, dash));
        if (dash >= 0 && c + 1 < parts.length) {
          int upper = Integer.parseInt(part.substring(dash + 1));
          String next = parts[c + 1].replace("+", "");
          int nextLower = Integer.parseInt(next.indexOf('-') < 0 ? next : next.substring(0, next.indexOf('-')));
          if (upper + 1 != nextLower) {
            throw new IllegalArgumentException("size class '" + parts[c] + "' must end just before the next one");
          }
        }
      } catch (NumberFormatException e) {
        throw new IllegalArgumentException("size classes: cannot read '" + parts[c] + "' in '" + text
            + "' (expected e.g. 1,2,3,4-5,6+)", e);
      }
    }
    return of(bounds);
  }

  /** 1, 2, 3, 4–5, 6–9, 10–15, 16–24, 25–39, 40+. */
  public static SizeClasses defaults() {
    return DEFAULTS;
  }

  /** One class for all sizes: the textbook null model (plain independence). */
  public static SizeClasses single() {
    return SINGLE;
  }

  public int count() {
    return lowerBounds.length;
  }

  /** The smallest size in class {@code c}. */
  public int lowerBound(int c) {
    return lowerBounds[c];
  }

  /** The class of a basket of {@code distinctItems} (at least 1) items. */
  public int classOf(int distinctItems) {
    return distinctItems <= LOOKUP_SIZES ? lookup[distinctItems] : search(distinctItems);
  }

  /** True when every basket of class {@code c} has one item: the class holds no pair. */
  public boolean pairless(int c) {
    return lowerBounds[c] == 1 && (c + 1 < lowerBounds.length && lowerBounds[c + 1] == 2);
  }

  private int search(int size) {
    int c = lowerBounds.length - 1;
    while (lowerBounds[c] > size) {
      c--;
    }
    return c;
  }

  /** The class's sizes as text: {@code "2"}, {@code "4-5"}, {@code "6+"}. */
  public String label(int c) {
    int low = lowerBounds[c];
    if (c + 1 == lowerBounds.length) {
      return low + "+";
    }
    int high = lowerBounds[c + 1] - 1;
    return high == low ? Integer.toString(low) : low + "-" + high;
  }

  @Override
  public boolean equals(Object other) {
    return other instanceof SizeClasses classes && Arrays.equals(lowerBounds, classes.lowerBounds);
  }

  @Override
  public int hashCode() {
    return Arrays.hashCode(lowerBounds);
  }

  /** E.g. {@code "1,2,3,4-5,6+"}; {@link #parse} reads it back. */
  @Override
  public String toString() {
    StringJoiner joiner = new StringJoiner(",");
    for (int c = 0; c < lowerBounds.length; c++) {
      joiner.add(label(c));
    }
    return joiner.toString();
  }
}
