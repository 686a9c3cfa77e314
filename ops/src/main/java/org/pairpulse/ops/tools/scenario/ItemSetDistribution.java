package org.pairpulse.ops.tools.scenario;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;

/**
 * A finite probability distribution over sets of items: outcome {@code i} has probability {@code p[i]} and
 * adds the items {@code sets[i]} to a basket. It is built from a few combinators ({@link #bernoulli},
 * {@link #either}, {@link #and}) and serves two purposes from the one definition:
 *
 * <ul>
 *   <li>the generator {@link #sample samples} an outcome per basket (one uniform draw, binary search in the
 *       cumulative table);
 *   <li>the ground truth reads exact expectations from the table ({@link #probabilityOf}, {@link #lift}), so
 *       the planted lifts it publishes are the ones the sampler plays, with no second formula to drift.
 * </ul>
 *
 * <p>Tables stay small (a few hundred outcomes at most); outcomes are not merged. Immutable.
 */
final class ItemSetDistribution {
  private static final String[] NONE = new String[0];

  private final double[] probabilities;
  private final String[][] itemSets;
  private final double[] cumulative;

  private ItemSetDistribution(double[] probabilities, String[][] itemSets) {
    assert probabilities.length == itemSets.length;
    this.probabilities = probabilities;
    this.itemSets = itemSets;
    cumulative = new double[probabilities.length];
    double sum = 0;
    for (int i = 0; i < probabilities.length; i++) {
      sum += probabilities[i];
      cumulative[i] = sum;
    }
    if (Math.abs(sum - 1.0) > 1e-9) {
      throw new IllegalArgumentException("outcome probabilities sum to " + sum + ", not 1");
    }
    // no rounding gap at the top: from the last outcome that can happen on, the table is +inf
    int last = probabilities.length - 1;
    while (last > 0 && probabilities[last] == 0) {
      last--;
    }
    Arrays.fill(cumulative, last, cumulative.length, Double.POSITIVE_INFINITY);
  }

  /** Adds nothing, always. */
  static ItemSetDistribution nothing() {
    return new ItemSetDistribution(new double[] {1.0}, new String[][] {NONE});
  }

  /** Adds {@code items}, always. */
  static ItemSetDistribution always(String... items) {
    return new ItemSetDistribution(new double[] {1.0}, new String[][] {distinct(items)});
  }

  /** Adds {@code items} with probability {@code p}, else nothing. */
  static ItemSetDistribution bernoulli(double p, String... items) {
    return either(p, always(items), nothing());
  }

  /** With probability {@code p} an outcome of {@code ifTrue}, else one of {@code ifFalse} (a mixture). */
  static ItemSetDistribution either(double p, ItemSetDistribution ifTrue, ItemSetDistribution ifFalse) {
    checkProbability(p);
    int n = ifTrue.size() + ifFalse.size();
    double[] probabilities = new double[n];
    String[][] sets = new String[n][];
    int i = 0;
    for (int t = 0; t < ifTrue.size(); t++, i++) {
      probabilities[i] = p * ifTrue.probabilities[t];
      sets[i] = ifTrue.itemSets[t];
    }
    for (int f = 0; f < ifFalse.size(); f++, i++) {
      probabilities[i] = (1 - p) * ifFalse.probabilities[f];
      sets[i] = ifFalse.itemSets[f];
    }
    return new ItemSetDistribution(probabilities, sets);
  }

  /** An outcome of this and, independently, one of {@code other}; the basket gets both sets. */
  ItemSetDistribution and(ItemSetDistribution other) {
    int n = size() * other.size();
    double[] probabilities = new double[n];
    String[][] sets = new String[n][];
    int i = 0;
    for (int a = 0; a < size(); a++) {
      for (int b = 0; b < other.size(); b++, i++) {
        probabilities[i] = this.probabilities[a] * other.probabilities[b];
        String[] union = Arrays.copyOf(itemSets[a], itemSets[a].length + other.itemSets[b].length);
        System.arraycopy(other.itemSets[b], 0, union, itemSets[a].length, other.itemSets[b].length);
        sets[i] = distinct(union);
      }
    }
    return new ItemSetDistribution(probabilities, sets);
  }

  int size() {
    return probabilities.length;
  }

  /** The items of one outcome drawn with {@code random} (one {@code nextDouble}); do not modify. */
  String[] sample(SplittableRandom random) {
    double u = random.nextDouble();
    int low = 0;
    int high = cumulative.length - 1;
    while (low < high) { // the first index whose cumulative value exceeds u (a zero-probability one never does)
      int middle = (low + high) >>> 1;
      if (cumulative[middle] > u) {
        high = middle;
      } else {
        low = middle + 1;
      }
    }
    return itemSets[low];
  }

  /** Every item some outcome adds, in first-seen order. */
  List<String> items() {
    Set<String> items = new LinkedHashSet<>();
    for (String[] set : itemSets) {
      items.addAll(Arrays.asList(set));
    }
    return new ArrayList<>(items);
  }

  /** The probability that a basket gets all of {@code items} from this distribution. */
  double probabilityOf(String... items) {
    double p = 0;
    for (int i = 0; i < probabilities.length; i++) {
      if (containsAll(itemSets[i], items)) {
        p += probabilities[i];
      }
    }
    return p;
  }

  /** The expected lift {@code P(a ∧ b) / (P(a) · P(b))} of two items this distribution adds. */
  double lift(String a, String b) {
    return probabilityOf(a, b) / (probabilityOf(a) * probabilityOf(b));
  }

  /** The expected confidence {@code P(b | a)} of the rule a ⇒ b. */
  double confidence(String a, String b) {
    return probabilityOf(a, b) / probabilityOf(a);
  }

  private static boolean containsAll(String[] set, String[] items) {
    for (String item : items) {
      if (!Arrays.asList(set).contains(item)) {
        return false;
      }
    }
    return true;
  }

  private static String[] distinct(String[] items) {
    return new LinkedHashSet<>(Arrays.asList(items)).toArray(NONE);
  }

  private static void checkProbability(double p) {
    if (!(p >= 0 && p <= 1)) {
      throw new IllegalArgumentException("a probability must be in [0, 1], got " + p);
    }
  }
}
