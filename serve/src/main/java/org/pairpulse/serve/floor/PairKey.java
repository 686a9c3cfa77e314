package org.pairpulse.serve.floor;

import java.util.Objects;

/**
 * An unordered pair {a, b} as a map key: the two ids in {@link String#compareTo} order, so that
 * {@code PairKey.of(a, b).equals(PairKey.of(b, a))}.
 *
 * @param first the smaller id
 * @param second the larger id
 */
public record PairKey(String first, String second) {

  public PairKey {
    Objects.requireNonNull(first, "first");
    Objects.requireNonNull(second, "second");
    if (first.compareTo(second) > 0) {
      throw new IllegalArgumentException("need first <= second, got '" + first + "', '" + second + "'");
    }
  }

  /** The key of {a, b} in either order. */
  public static PairKey of(String a, String b) {
    return a.compareTo(b) <= 0 ? new PairKey(a, b) : new PairKey(b, a);
  }

  @Override
  public String toString() {
    return "{" + first + ", " + second + "}";
  }
}
