package org.pairpulse.serve.suggest;

import java.util.Arrays;
import java.util.Locale;
import java.util.stream.Collectors;

/**
 * How the {@link Suggester} orders eligible candidates (see its class comment for the formulas).
 *
 * <ul>
 *   <li>{@link #ASSOCIATION}: score(c) = Σ_x φ(m(x ⇒ c)), the association with the basket alone (the
 *       naive-Bayes log ratio ln(P(c | basket) / P(c)) for a lift measure). It favours items that are rare
 *       overall but tied to the basket: the items this basket makes more likely than usual, however popular.</li>
 *   <li>{@link #POSTERIOR}: score(c) = ln s(c) + Σ_x ln m(x ⇒ c) with m a lift measure, the naive-Bayes
 *       log-posterior ln P(c | basket) up to a constant that is the same for every candidate: the item most
 *       likely to be in the basket. Candidates are the neighbours plus every published item of the horizon
 *       (an item without a published pair with the basket is scored as independent of it).</li>
 * </ul>
 */
public enum SuggestionRanking {
  ASSOCIATION, POSTERIOR;

  /** The name used on the wire and in settings: {@code association}, {@code posterior}. */
  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }

  /** @throws IllegalArgumentException naming the known rankings when {@code wireName} is not one */
  public static SuggestionRanking fromWireName(String wireName) {
    for (SuggestionRanking ranking : values()) {
      if (ranking.wireName().equals(wireName)) {
        return ranking;
      }
    }
    throw new IllegalArgumentException("unknown ranking '" + wireName + "'; known: "
        + Arrays.stream(values()).map(SuggestionRanking::wireName).collect(Collectors.joining(", ")));
  }
}
