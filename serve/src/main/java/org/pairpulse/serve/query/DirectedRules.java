package org.pairpulse.serve.query;

import java.util.Comparator;
import java.util.List;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairStats;

/**
 * The rules of one item ({@code GET /api/v1/rules}): outgoing {@code item ⇒ x} and incoming {@code x ⇒ item},
 * each best first by the measure read in that direction (confidence and conviction differ by direction, the
 * symmetric measures do not), an undefined value (NaN) last, ties by the other item's id.
 */
public final class DirectedRules {
  private DirectedRules() {}

  /**
   * @param item the item whose rules are listed
   * @param horizon a horizon of the table
   * @param measure the measure that orders the rules, read in each rule's direction
   * @param count at most this many rules per direction, at least 1
   */
  public record Query(String item, String horizon, Measure measure, int count) {}

  /** One rule {@code antecedent ⇒ consequent} read from {@code pair}, with its measure's value in that direction. */
  public record Rule(PairStats pair, String antecedent, double measureValue) {
    public String consequent() {
      return pair.other(antecedent);
    }
  }

  /** {@code item ⇒ x} for the pairs of {@code item} ({@code neighbours}: every pair holds the item). */
  public static List<Rule> outgoing(List<PairStats> neighbours, String item, Measure measure, int count) {
    return best(neighbours, item, measure, count, true);
  }

  /** {@code x ⇒ item} for the pairs of {@code item}. */
  public static List<Rule> incoming(List<PairStats> neighbours, String item, Measure measure, int count) {
    return best(neighbours, item, measure, count, false);
  }

  private static List<Rule> best(List<PairStats> neighbours, String item, Measure measure, int count,
      boolean outgoing) {
    BoundedBest<Rule> best = new BoundedBest<>(count, bestFirst(item));
    for (PairStats pair : neighbours) {
      String antecedent = outgoing ? item : pair.other(item);
      best.offer(new Rule(pair, antecedent, value(measure, pair, antecedent)));
    }
    return best.bestFirst();
  }

  /** {@code measure} of the rule {@code antecedent ⇒ other} read from {@code pair}. */
  static double value(Measure measure, PairStats pair, String antecedent) {
    return Suggester.directed(measure, pair.measures(), pair.itemA().equals(antecedent));
  }

  /** Highest value first, NaN last, then by the item other than {@code item}. */
  static Comparator<Rule> bestFirst(String item) {
    return Comparator.comparingDouble((Rule r) -> Double.isNaN(r.measureValue()) ? Double.POSITIVE_INFINITY
        : -r.measureValue()).thenComparing(r -> r.pair().other(item));
  }
}
