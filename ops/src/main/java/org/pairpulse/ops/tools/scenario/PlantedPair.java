package org.pairpulse.ops.tools.scenario;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Objects;

/**
 * One planted fact of the scenario, with the times and the expected lift a detector can be measured against.
 *
 * <p>{@code expectedLift} is the model's exact expectation {@code P(a ∧ b) / (P(a) · P(b))} per basket over
 * {@code [startMillis, endMillis)}; {@code expectedLiftOutside} the same outside that interval (before and
 * after), or NaN when the interval is the whole run or an item does not sell outside it (a pair from nothing).
 * For {@link PlantedKind#NOISE_POPULARITY} there is one item and both lifts are those of the item with any other
 * item (1: popularity is not association).
 *
 * @param kind what the pair is
 * @param items the two item ids in lexicographic order (one for {@link PlantedKind#NOISE_POPULARITY})
 * @param startMillis where the interval in which {@code expectedLift} holds begins (event time, inclusive)
 * @param endMillis where it ends (event time, exclusive); may lie after the simulation end
 * @param expectedLift the expected lift inside the interval
 * @param expectedLiftOutside the expected lift outside it, NaN when there is no outside or it is undefined there
 * @param description one line for people: the story, the rates, the confidences
 */
public record PlantedPair(PlantedKind kind, List<String> items, long startMillis, long endMillis,
    double expectedLift, double expectedLiftOutside, String description) {

  public PlantedPair {
    Objects.requireNonNull(kind, "kind");
    Objects.requireNonNull(description, "description");
    List<String> sorted = new ArrayList<>(items); // throws on null items, rejects null ids below
    Collections.sort(sorted);
    items = List.copyOf(sorted);
    int expected = kind == PlantedKind.NOISE_POPULARITY ? 1 : 2;
    if (items.size() != expected || (expected == 2 && items.get(0).equals(items.get(1)))) {
      throw new IllegalArgumentException(kind + " needs " + expected + " distinct items, got " + items);
    }
    if (startMillis >= endMillis) {
      throw new IllegalArgumentException("start " + startMillis + " must be before end " + endMillis);
    }
    if (!(expectedLift >= 0)) {
      throw new IllegalArgumentException("expectedLift must be >= 0, got " + expectedLift);
    }
  }

  /** Whether this pair is about {@code a} and {@code b} (in either order). */
  public boolean isPair(String a, String b) {
    return items.size() == 2
        && (items.get(0).equals(a) && items.get(1).equals(b) || items.get(0).equals(b) && items.get(1).equals(a));
  }

  /** Whether {@code eventMillis} lies in {@code [startMillis, endMillis)}. */
  public boolean covers(long eventMillis) {
    return eventMillis >= startMillis && eventMillis < endMillis;
  }
}
