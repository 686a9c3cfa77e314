package org.pairpulse.sketch.hash;

import net.openhft.hashing.LongHashFunction;

/**
 * 64-bit hashes of item ids and order-independent pair keys.
 *
 * <p>Item ids are hashed once per basket with XXH3 (from the zero-allocation-hashing library), which
 * reads the {@code String}'s characters without copying them. A pair key combines the two item hashes
 * so that {@code pairKey(a, b) == pairKey(b, a)}: the smaller hash and the larger hash are mixed in a
 * fixed order. Two distinct pairs share a key with probability about 2<sup>-64</sup> per pair of pairs;
 * such a collision merges their counts, which is within the count-min sketch's overcount contract.
 */
public final class ItemHash {
  private static final LongHashFunction XX3 = LongHashFunction.xx3(0x70A1_9B1E_5EEDL);
  /** Odd constant from the golden ratio, used by Fibonacci hashing (Knuth, TAOCP vol. 3, 6.4). */
  private static final long GOLDEN = 0x9E37_79B9_7F4A_7C15L;

  private ItemHash() {}

  /** The 64-bit hash of one item id. */
  public static long of(String itemId) {
    return XX3.hashChars(itemId);
  }

  /** The order-independent key of the pair {a, b} from the two item hashes. */
  public static long pairKey(long itemHashA, long itemHashB) {
    long low = Math.min(itemHashA, itemHashB);
    long high = Math.max(itemHashA, itemHashB);
    return mix64(low * GOLDEN + Long.rotateLeft(high, 31));
  }

  /**
   * A bijective 64-bit finaliser (the "mix13" variant of MurmurHash3's fmix64 by D. Stafford), so that
   * nearby inputs spread over all bits.
   */
  public static long mix64(long z) {
    z = (z ^ (z >>> 30)) * 0xBF58_476D_1CE4_E5B9L;
    z = (z ^ (z >>> 27)) * 0x94D0_49BB_1331_11EBL;
    return z ^ (z >>> 31);
  }
}
