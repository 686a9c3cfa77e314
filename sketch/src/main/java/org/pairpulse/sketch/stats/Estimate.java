package org.pairpulse.sketch.stats;

/**
 * A (time-weighted) count together with the bounds a sketch guarantees for it.
 *
 * <p>Invariant, checked on construction: {@code 0 <= lower <= value <= upper}, all finite. An
 * exactly known count has {@code lower == value == upper} (see {@link #exact(double)}). Counts are
 * weighted, so none of the three needs to be an integer.
 *
 * @param value the point estimate of the count
 * @param lower a lower bound of the true count
 * @param upper an upper bound of the true count
 */
public record Estimate(double value, double lower, double upper) {

  /**
   * @throws IllegalArgumentException if a number is NaN, infinite or negative, or the three are
   *     not ordered {@code lower <= value <= upper}
   */
  public Estimate {
    requireCount("value", value);
    requireCount("lower", lower);
    requireCount("upper", upper);
    if (lower > value || value > upper) {
      throw new IllegalArgumentException(
          "need lower <= value <= upper, got lower=" + lower + ", value=" + value + ", upper=" + upper);
    }
  }

  /** A count known exactly: both bounds equal the value. */
  public static Estimate exact(double value) {
    return new Estimate(value, value, value);
  }

  /** Whether both bounds equal the value. */
  public boolean isExact() {
    return lower == value && value == upper;
  }

  /**
   * This estimate with value and bounds multiplied by {@code factor} (e.g. to renormalise
   * forward-decayed counts to a new landmark).
   *
   * @throws IllegalArgumentException if {@code factor} is NaN, infinite or negative, or the
   *     product overflows
   */
  public Estimate scaledBy(double factor) {
    requireCount("factor", factor);
    return new Estimate(value * factor, lower * factor, upper * factor);
  }

  static void requireCount(String name, double count) {
    if (!(count >= 0.0) || count == Double.POSITIVE_INFINITY) {
      throw new IllegalArgumentException(name + " must be finite and >= 0, got " + count);
    }
  }
}
