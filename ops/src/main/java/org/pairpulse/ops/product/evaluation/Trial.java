package org.pairpulse.ops.product.evaluation;

import java.util.List;

/**
 * One test-then-train trial: a basket with one item hidden, and where each method ranked it.
 *
 * @param basketId the basket
 * @param eventMillis its event time
 * @param hidden the hidden item
 * @param query the items asked with (the basket's distinct items minus the hidden one, sorted)
 * @param incrementalRank rank of the hidden item among the incremental table's suggestions (1 = first, 0 = missed)
 * @param nightlyRank the same for the nightly table
 * @param popularRank the same for the most-popular list
 * @param incrementalVersion the incremental table's version
 * @param nightlyVersion the nightly table's version
 */
public record Trial(String basketId, long eventMillis, String hidden, List<String> query, int incrementalRank,
    int nightlyRank, int popularRank, long incrementalVersion, long nightlyVersion) {
  public Trial {
    query = List.copyOf(query);
  }

  /** The rank of one method. */
  public int rank(EvaluationMethod method) {
    switch (method) {
      case INCREMENTAL:
        return incrementalRank;
      case NIGHTLY:
        return nightlyRank;
      default:
        return popularRank;
    }
  }
}
