package org.pairpulse.serve.drift;

import java.util.Locale;

/**
 * What changed behind an emerging or fading alert, from the two tests of {@link DriftStatistics}.
 * {@link #wireName()} is the stable lower-case name on the wire.
 */
public enum DriftChange {
  /**
   * The pair's rate per basket moved significantly and its association could not be shown to stay put: the
   * typical case of a pair that rises from nothing (its reference odds ratio is unknown, the sketch bounds it
   * only from above) or of a pair whose item is bought mostly with it.
   */
  RATE,
  /** The association (odds ratio) moved significantly, the rate did not move against it. */
  ASSOCIATION,
  /** Both moved significantly, the same way. */
  BOTH;

  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }

  /** Plain words for people. */
  public String describe() {
    switch (this) {
      case RATE:
        return "bought together more or less often per basket";
      case ASSOCIATION:
        return "association changed beyond the items' own popularity";
      default:
        return "bought together more or less often, beyond the items' own popularity";
    }
  }
}
