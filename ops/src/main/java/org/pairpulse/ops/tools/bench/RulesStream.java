package org.pairpulse.ops.tools.bench;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ExactCounts;
import org.pairpulse.sketch.fixtures.SizeShape;

/**
 * A seeded basket stream for rule quality (the workload; the baskets come from the shared {@link BasketStream}):
 * invented items ({@code ware-0000} …) whose popularity follows Zipf's law, drawn independently of each other into
 * baskets whose sizes follow one of several {@link SizeShape}s, except for
 * planted pairs of known strength: when a basket holds a planted pair's antecedent, its consequent joins with the
 * pair's probability. Every other co-occurrence is chance, so any other pair an offer list holds is spurious.
 *
 * <p>Planted antecedents are mid-popularity items (ranks from 20 on, spread over the catalogue) and consequents are
 * taken further down, so that the rule a ⇒ b has a confidence of about its strength (0.30–0.50, inside the default
 * band) while b ⇒ a stays well below it. The stream counts each planted pair exactly ({@link #plantedCounts()}).
 */
public final class RulesStream {
  /** A planted pair: the consequent joins a basket holding the antecedent with probability {@code strength}. */
  public record Planted(String antecedent, String consequent, double strength) {
    /** The unordered key "a|b" with a &lt; b. */
    public String key() {
      return pairKey(antecedent, consequent);
    }
  }

  private final BasketStream stream;
  private final List<Planted> planted;
  private final Map<String, Long> plantedCounts = new HashMap<>();

  /**
   * @param seed the stream's seed
   * @param items catalogue size (at least 200)
   * @param zipfExponent popularity exponent (about 1)
   * @param shape basket sizes (at most a quarter of the catalogue)
   * @param plantedPairs how many pairs to plant (0: every item independent)
   */
  public RulesStream(long seed, int items, double zipfExponent, SizeShape shape, int plantedPairs) {
    if (items < 200) {
      throw new IllegalArgumentException("need at least 200 items, got " + items);
    }
    String[] names = new String[items];
    for (int i = 0; i < items; i++) {
      names[i] = String.format(Locale.ROOT, "ware-%04d", i);
    }
    BasketStream.Builder builder = BasketStream.builder(seed).zipf(names, zipfExponent).sizes(shape)
        .maxSize(items / 4);
    List<Planted> list = new ArrayList<>();
    SplittableRandom plant = new SplittableRandom(seed ^ 0x9E37_79B9_7F4A_7C15L);
    for (int p = 0; p < plantedPairs; p++) {
      int antecedent = 20 + p * Math.max(1, (items / 4) / Math.max(1, plantedPairs)); // ranks 20 .. ~items/4
      int consequent = antecedent + items / 4 + plant.nextInt(items / 8);
      double strength = 0.30 + 0.20 * plant.nextDouble();
      Planted pair = new Planted(names[antecedent], names[Math.min(items - 1, consequent)], strength);
      list.add(pair);
      builder.join(new BasketStream.Join(pair.antecedent(), pair.consequent(), strength));
      plantedCounts.put(pair.key(), 0L);
    }
    this.planted = List.copyOf(list);
    this.stream = builder.build();
  }

  /** The next basket's distinct items. */
  public List<String> basket() {
    List<String> basket = List.copyOf(stream.basket(0L));
    for (Planted pair : planted) {
      if (basket.contains(pair.antecedent()) && basket.contains(pair.consequent())) {
        plantedCounts.merge(pair.key(), 1L, Long::sum);
      }
    }
    return basket;
  }

  public List<Planted> planted() {
    return planted;
  }

  /** Baskets so far holding both items of each planted pair, by {@link Planted#key()}. */
  public Map<String, Long> plantedCounts() {
    return Map.copyOf(plantedCounts);
  }

  /** A uniform number in [0, 1) from the stream's generator (for attributes and evaluation draws). */
  public double nextDouble() {
    return stream.random().nextDouble();
  }

  /** The unordered key "a|b" with a &lt; b. */
  public static String pairKey(String a, String b) {
    return ExactCounts.pairName(a, b);
  }
}
