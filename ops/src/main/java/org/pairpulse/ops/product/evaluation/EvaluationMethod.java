package org.pairpulse.ops.product.evaluation;

import java.util.Locale;

/** Who answers a test-then-train trial; {@link #wireName()} is the stable name in JSON and metrics. */
public enum EvaluationMethod {
  /** pairpulse as served: suggestions from the newest pair table (refreshed every few minutes of event time). */
  INCREMENTAL,
  /** The same suggester on a pair table rebuilt once per simulated day (at its first refresh after midnight UTC). */
  NIGHTLY,
  /** The most frequent items of the newest pair table (the evaluation horizon's n_a), minus the basket's items. */
  POPULAR;

  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }
}
