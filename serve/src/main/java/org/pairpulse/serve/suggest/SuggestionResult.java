package org.pairpulse.serve.suggest;

import java.util.List;

/**
 * The answer to a {@link SuggestionRequest}.
 *
 * @param basket the normalised basket (distinct items, sorted)
 * @param unknownItems basket items with no published pair in the horizon (never seen, not
 *     tracked, or under the cohort floor: the three are not told apart)
 * @param horizon the horizon used
 * @param measure the wire name of the scoring measure
 * @param tableVersion the pair-table version the answer was computed from
 * @param suggestions best first, at most the requested count
 */
public record SuggestionResult(List<String> basket, List<String> unknownItems, String horizon, String measure,
    long tableVersion, List<Suggestion> suggestions) {
  public SuggestionResult {
    basket = List.copyOf(basket);
    unknownItems = List.copyOf(unknownItems);
    suggestions = List.copyOf(suggestions);
  }
}
