package org.pairpulse.serve.suggest;

import java.util.List;

/**
 * An item proposed for a basket, with its score and the evidence behind it.
 *
 * @param item the suggested item
 * @param score the combined score (see {@link Suggester} for the combination method)
 * @param evidence one entry per basket item whose pair with {@code item} is tracked and published,
 *     largest contribution first
 */
public record Suggestion(String item, double score, List<Evidence> evidence) {
  public Suggestion {
    evidence = List.copyOf(evidence);
  }
}
