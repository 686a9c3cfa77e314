package org.pairpulse.sketch.engine;

/**
 * The three engines a state check runs on, which must agree: one engine fed every basket, two engines fed alternate
 * baskets and merged, and the first after a snapshot round trip ({@link Snapshots}).
 */
final class ThreeWays {
  private ThreeWays() {}

  /** {@code one}; {@code halves[0]} with {@code halves[1]} merged in, advanced to one's watermark; one read back. */
  static PairEngine[] of(PairEngine one, PairEngine[] halves) {
    PairEngine merged = halves[0];
    merged.merge(halves[1]);
    merged.advanceTo(one.watermarkMillis());
    return new PairEngine[] {one, merged, Snapshots.read(Snapshots.write(one))};
  }
}
