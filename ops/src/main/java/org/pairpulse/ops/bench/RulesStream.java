package org.pairpulse.ops.bench;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;

/**
 * A seeded basket stream for rule quality: invented items ({@code ware-0000} …) whose popularity follows Zipf's law,
 * drawn independently of each other into baskets whose sizes follow one of several {@link SizeShape}s, except for
 * planted pairs of known strength: when a basket holds a planted pair's antecedent, its consequent joins with the
 * pair's probability. Every other co-occurrence is chance, so any other pair an offer list holds is spurious.
 *
 * <p>Planted antecedents are mid-popularity items (ranks from 20 on, spread over the catalogue) and consequents are
 * taken further down, so that the rule a ⇒ b has a confidence of about its strength (0.30–0.50, inside the default
 * band) while b ⇒ a stays well below it. The stream counts each planted pair exactly ({@link #plantedCounts()}).
 */
public final class RulesStream {
  /** How many items a basket has: the shapes the benchmark and the tests run through. */
  public enum SizeShape {
    /** Mostly 1–3 items (geometric, mean about 2): a shop's quick purchases. */
    SMALL,
    /** A lognormal around 4 items (median 3.5), few above 12: sessions. */
    MIXED,
    /** 70% small (geometric, mean 2), 30% from a Pareto tail (α 1.5, from 6 up to 60 items): a heavy tail. */
    HEAVY_TAIL;

    int draw(SplittableRandom random) {
      return switch (this) {
        case SMALL -> geometric(random, 0.5);
        case MIXED -> (int) Math.max(1, Math.min(40, Math.round(Math.exp(1.25 + 0.6 * gaussian(random)))));
        case HEAVY_TAIL -> random.nextDouble() < 0.7 ? geometric(random, 0.5)
            : (int) Math.min(60, Math.floor(6 * Math.pow(1 - random.nextDouble(), -1 / 1.5)));
      };
    }

    public String wireName() {
      return name().toLowerCase(Locale.ROOT).replace('_', '-');
    }

    private static int geometric(SplittableRandom random, double stop) {
      int size = 1;
      while (size < 40 && random.nextDouble() >= stop) {
        size++;
      }
      return size;
    }

    private static double gaussian(SplittableRandom random) {
      return Math.sqrt(-2 * Math.log(1 - random.nextDouble())) * Math.cos(2 * Math.PI * random.nextDouble());
    }
  }

  /** A planted pair: the consequent joins a basket holding the antecedent with probability {@code strength}. */
  public record Planted(String antecedent, String consequent, double strength) {
    /** The unordered key "a|b" with a &lt; b. */
    public String key() {
      return pairKey(antecedent, consequent);
    }
  }

  private final SplittableRandom random;
  private final ZipfSampler zipf;
  private final String[] names;
  private final SizeShape shape;
  private final List<Planted> planted;
  private final Map<String, List<Planted>> plantedByAntecedent = new HashMap<>();
  private final Map<String, Long> plantedCounts = new HashMap<>();

  /**
   * @param seed the stream's seed
   * @param items catalogue size (at least 200)
   * @param zipfExponent popularity exponent (about 1)
   * @param shape basket sizes
   * @param plantedPairs how many pairs to plant (0: every item independent)
   */
  public RulesStream(long seed, int items, double zipfExponent, SizeShape shape, int plantedPairs) {
    if (items < 200) {
      throw new IllegalArgumentException("need at least 200 items, got " + items);
    }
    this.random = new SplittableRandom(seed);
    this.zipf = new ZipfSampler(items, zipfExponent);
    this.shape = shape;
    this.names = new String[items];
    for (int i = 0; i < items; i++) {
      names[i] = String.format(Locale.ROOT, "ware-%04d", i);
    }
    List<Planted> list = new ArrayList<>();
    SplittableRandom plant = new SplittableRandom(seed ^ 0x9E37_79B9_7F4A_7C15L);
    for (int p = 0; p < plantedPairs; p++) {
      int antecedent = 20 + p * Math.max(1, (items / 4) / Math.max(1, plantedPairs)); // ranks 20 .. ~items/4
      int consequent = antecedent + items / 4 + plant.nextInt(items / 8);
      double strength = 0.30 + 0.20 * plant.nextDouble();
      Planted pair = new Planted(names[antecedent], names[Math.min(items - 1, consequent)], strength);
      list.add(pair);
      plantedByAntecedent.computeIfAbsent(pair.antecedent(), k -> new ArrayList<>()).add(pair);
      plantedCounts.put(pair.key(), 0L);
    }
    this.planted = List.copyOf(list);
  }

  /** The next basket's distinct items. */
  public List<String> basket() {
    int size = Math.min(shape.draw(random), names.length / 4);
    Set<String> items = new LinkedHashSet<>();
    while (items.size() < size) {
      items.add(names[zipf.sample(random)]);
    }
    List<String> joined = new ArrayList<>(0);
    for (String item : items) {
      List<Planted> pairs = plantedByAntecedent.get(item);
      for (int i = 0; pairs != null && i < pairs.size(); i++) {
        if (random.nextDouble() < pairs.get(i).strength()) {
          joined.add(pairs.get(i).consequent());
        }
      }
    }
    items.addAll(joined);
    List<String> basket = List.copyOf(items);
    for (Planted pair : planted) {
      if (items.contains(pair.antecedent()) && items.contains(pair.consequent())) {
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
    return random.nextDouble();
  }

  /** The unordered key "a|b" with a &lt; b. */
  public static String pairKey(String a, String b) {
    return a.compareTo(b) < 0 ? a + "|" + b : b + "|" + a;
  }
}
