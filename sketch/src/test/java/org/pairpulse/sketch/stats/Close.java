package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.fail;

/** Relative-tolerance assertion that treats equal infinities and two NaNs as equal. */
final class Close {

  private Close() {
  }

  static void assertClose(double expected, double actual, double relativeTolerance, String what) {
    if (Double.compare(expected, actual) == 0 || (Double.isNaN(expected) && Double.isNaN(actual))) {
      return;
    }
    double scale = Math.max(1.0, Math.max(Math.abs(expected), Math.abs(actual)));
    if (!(Math.abs(expected - actual) <= relativeTolerance * scale)) {
      fail(what + ": expected " + expected + " but was " + actual + " (relative tolerance "
          + relativeTolerance + ")");
    }
  }
}
