package org.pairpulse.serve.suggest;

import java.util.ArrayList;
import java.util.Collections;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * Suggestions for a basket from a {@link FlooredTable}: pure, deterministic, thread-safe, no I/O.
 * The HTTP layer, the backtest and the evaluation all call this class.
 *
 * <h2>Candidates</h2>
 * The neighbours of the basket's items in the request's horizon (at most
 * {@link #maxNeighboursPerItem()} per basket item, best first by the table's measure), minus the
 * basket's own items. A candidate is <em>eligible</em> when at least one basket item x gives a
 * rule x ⇒ candidate whose confidence lies in the request's band (default 0.30–0.60) and whose
 * support is at or above the request's floor and, under the association ranking, whose pair passes the
 * offer screen ({@link org.pairpulse.serve.floor.OfferScreen}: its size-adjusted association is significant
 * after a Benjamini–Hochberg step over the horizon's published pairs), so a list may be shorter than
 * asked; it is never padded. A candidate that forms a bundle pair with any basket
 * item is dropped unless the request includes bundle pairs.
 *
 * <h2>Combining several basket items</h2>
 * A candidate c's score sums, over the basket items x whose pair {x, c} is published, a
 * per-pair contribution φ(m(x ⇒ c)) of the request's measure m:
 * <pre>
 *   score(c) = Σ_x φ(m(x ⇒ c)),   φ = ln  for the ratio measures lift, shrunk_lift, lift_lower, conviction
 *                                           (and their _unadjusted twins)
 *                                 φ = identity for the others (support, confidence, leverage, kulczynski,
 *                                                              signed_root_g2)
 * </pre>
 * With the default measure, shrunk lift, the score is ln Π_x shrunkLift(x, c): the naive-Bayes
 * estimate of ln(P(c | basket) / P(c)) when the basket's items are independent of each other,
 * both overall and given c (P(x | c) / P(x) is the lift of {x, c}). Shrinking keeps a thinly
 * evidenced pair near ln 1 = 0, and a pair that is not tracked or not published contributes
 * exactly 0, the value of independence. A repelling basket item therefore lowers a candidate's
 * score, while out-of-band pairs still count as evidence: the band decides eligibility only.
 * Ratio values are clamped to [{@value #MIN_RATIO}, {@value #MAX_RATIO}] before the logarithm
 * (conviction is +∞ at confidence 1; the lift's lower bound may be 0). Directed measures
 * (confidence, conviction) are read in the direction x ⇒ c. Pairs whose measure is NaN are
 * skipped. Ties in score are broken by item id, so answers are deterministic.
 *
 * <h2>Rankings</h2>
 * The sum above is the {@linkplain SuggestionRanking#ASSOCIATION association} ranking (the default): it
 * ranks by how much the basket raises a candidate's probability, so a rare item tied to the basket comes
 * first. The {@linkplain SuggestionRanking#POSTERIOR posterior} ranking (lift measures only) adds the
 * candidate's own log support:
 * <pre>
 *   score(c) = ln s(c) + Σ_x ln m(x ⇒ c),   s(c) = n_c / N in the request's horizon
 * </pre>
 * which is ln P(c | basket) up to a term that does not depend on c, under the naive-Bayes assumption that
 * the basket's items are independent given c (and overall): P(c | x₁..x_n) ∝ P(c) Π P(x_i | c) and
 * P(x | c) = lift(x, c)·P(x) (Hastie, Tibshirani, Friedman, The Elements of Statistical Learning, 2nd ed.,
 * 2009, section 6.6.3, "The Naive Bayes Classifier", cited from memory). It ranks by how likely the candidate is to be
 * in the basket. A candidate reached through a pair but without a published count of its own is left out
 * (its prior is unknown). Published items that no basket item's pair reaches are also candidates: with no
 * published pair they are taken as independent of the basket (each term ln 1 = 0, score ln s(c)); their
 * rules x ⇒ c then have confidence s(c) and support s(x)·s(c), which the band and the support floor test as
 * usual (s(x) over the basket items with a published count), so with the default band 0.30–0.60 only very
 * common items can qualify this way. A basket without any published pair therefore still gets an answer under
 * this ranking: with no evidence of association the posterior is the prior. They are scanned
 * most frequent first and the scan stops as soon as no further item could enter the answer; they carry no
 * evidence rows. Bundle pairs are excluded exactly as under the association ranking, and every count read
 * is a published (floored) one.
 */
public final class Suggester {
  /** Default scan limit per basket item: the 500 best neighbours by the table's measure. */
  public static final int DEFAULT_MAX_NEIGHBOURS_PER_ITEM = 500;
  static final double MIN_RATIO = 1e-6;
  static final double MAX_RATIO = 1e6;

  private final int maxNeighboursPerItem;

  /** @param maxNeighboursPerItem neighbours read per basket item, best first; at least 1 */
  public Suggester(int maxNeighboursPerItem) {
    if (maxNeighboursPerItem < 1) {
      throw new IllegalArgumentException("maxNeighboursPerItem must be >= 1, got " + maxNeighboursPerItem);
    }
    this.maxNeighboursPerItem = maxNeighboursPerItem;
  }

  /** A suggester with the default scan limit. */
  public static Suggester defaults() {
    return new Suggester(DEFAULT_MAX_NEIGHBOURS_PER_ITEM);
  }

  public int maxNeighboursPerItem() {
    return maxNeighboursPerItem;
  }

  /**
   * Warms the per-version index of {@code table}, every horizon (the server calls this off the request
   * path when a new table arrives, so the first request of a version does not pay for it). Without it, a
   * horizon is built when a request first reads it (a backtest reads one).
   */
  public void prepare(FlooredTable table) {
    SuggestIndex.of(table, maxNeighboursPerItem).buildAll();
  }

  /** Per-thread scratch: an open-addressing map from candidate id to its tally, cleared after use. */
  private static final class Scratch {
    int[] keys = new int[1024];
    double[] scores = new double[1024];
    byte[] flags = new byte[1024];
    int[] used = new int[1024];
    int usedCount;
    int[] basket = new int[64];

    void ensure(int entries) {
      int capacity = Integer.highestOneBit(Math.max(16, entries * 2 - 1)) << 1;
      if (keys.length < capacity) {
        keys = new int[capacity];
        scores = new double[capacity];
        flags = new byte[capacity];
        used = new int[capacity];
        java.util.Arrays.fill(keys, -1);
      }
    }

    /** The slot of {@code id}, claimed if new. Linear probing; ids are non-negative. */
    int slot(int id) {
      int slot = probe(id);
      if (keys[slot] == -1) {
        keys[slot] = id;
        used[usedCount++] = slot;
      }
      return slot;
    }

    /** The slot of {@code id}, or -1 when it has none (nothing is claimed). */
    int find(int id) {
      int slot = probe(id);
      return keys[slot] == id ? slot : -1;
    }

    /** The slot holding {@code id}, or the empty slot where it would go. */
    private int probe(int id) {
      int mask = keys.length - 1;
      int slot = (id * 0x9E3779B1) >>> 7 & mask;
      while (keys[slot] != id && keys[slot] != -1) {
        slot = (slot + 1) & mask;
      }
      return slot;
    }

    void clear() {
      for (int i = 0; i < usedCount; i++) {
        int slot = used[i];
        keys[slot] = -1;
        scores[slot] = 0;
        flags[slot] = 0;
      }
      usedCount = 0;
    }
  }

  private static final byte SEEN = 1;
  private static final byte ELIGIBLE = 2;
  private static final byte BUNDLE = 4;

  private static final ThreadLocal<Scratch> SCRATCH = ThreadLocal.withInitial(() -> {
    Scratch scratch = new Scratch();
    java.util.Arrays.fill(scratch.keys, -1);
    return scratch;
  });

  /**
   * Suggestions for {@code request} from {@code table}. An unknown horizon, or under the association ranking a
   * basket whose items are all unknown, gives an empty list (never an exception).
   */
  public SuggestionResult suggest(FlooredTable table, SuggestionRequest request) {
    List<String> basket = request.basket();
    Measure measure = request.measure();
    SuggestIndex index = SuggestIndex.of(table, maxNeighboursPerItem);
    SuggestIndex.Horizon h = index.horizon(request.horizon());
    List<String> unknown = new ArrayList<>();
    if (h == null) {
      return new SuggestionResult(basket, basket, request.horizon(), measure.wireName(), table.version(), List.of());
    }
    Scratch sc = SCRATCH.get();
    if (sc.basket.length < basket.size()) {
      sc.basket = new int[basket.size()];
    }
    int known = 0;
    int entries = 0;
    for (String item : basket) {
      int id = h.idWithEntries(item);
      if (id < 0) {
        unknown.add(item);
        continue;
      }
      sc.basket[known++] = id;
      entries += h.entries(id).size();
    }
    boolean posterior = request.ranking() == SuggestionRanking.POSTERIOR;
    SuggestIndex.Priors priors = posterior ? h.priors() : null;
    sc.ensure(entries + basket.size() + (posterior ? priors.popular().length : 0));
    try {
      for (int b = 0; b < known; b++) {
        sc.flags[sc.slot(sc.basket[b])] = -1; // basket items are never candidates
      }
      double minConfidence = request.minConfidence();
      double maxConfidence = request.maxConfidence();
      double minSupport = request.minSupport();
      for (int b = 0; b < known; b++) {
        int id = sc.basket[b];
        SuggestIndex.Entries en = h.entries(id);
        double[] phi = en.contributions(measure);
        boolean[] significant = posterior ? null : h.significant(id);
        for (int e = 0; e < en.size(); e++) {
          double contribution = phi[e];
          if (Double.isNaN(contribution)) {
            continue;
          }
          int slot = sc.slot(en.other[e]);
          byte f = sc.flags[slot];
          if (f < 0) {
            continue;
          }
          sc.scores[slot] += contribution;
          f |= SEEN;
          if (en.bundle[e]) {
            f |= BUNDLE;
          }
          double confidence = en.confidence[e];
          if (confidence >= minConfidence && confidence <= maxConfidence && en.support[e] >= minSupport
              && (posterior || significant[e])) {
            f |= ELIGIBLE;
          }
          sc.flags[slot] = f;
        }
      }
      if (posterior) {
        addPriors(priors, sc);
      }
      // best `count` eligible candidates: score, then id string ascending
      int[] keys = sc.keys;
      double[] scores = sc.scores;
      Comparator<Integer> worstFirst = (x, y) -> {
        int byScore = Double.compare(scores[x], scores[y]);
        return byScore != 0 ? byScore : index.name(keys[y]).compareTo(index.name(keys[x]));
      };
      PriorityQueue<Integer> best = new PriorityQueue<>(request.count() + 1, worstFirst);
      boolean bundles = request.includeBundles();
      for (int i = 0; i < sc.usedCount; i++) {
        int slot = sc.used[i];
        byte f = sc.flags[slot];
        if (f < 0 || (f & ELIGIBLE) == 0 || ((f & BUNDLE) != 0 && !bundles)) {
          continue;
        }
        best.add(slot);
        if (best.size() > request.count()) {
          best.poll();
        }
      }
      if (posterior) {
        addIndependent(request, index, priors, sc, best);
      }
      List<Integer> ranked = new ArrayList<>(best);
      ranked.sort(worstFirst.reversed());
      List<Suggestion> suggestions = new ArrayList<>(ranked.size());
      for (int slot : ranked) {
        suggestions.add(new Suggestion(index.name(keys[slot]), scores[slot], evidence(request, h, sc, known, keys[slot])));
      }
      return new SuggestionResult(basket, unknown, request.horizon(), measure.wireName(), table.version(), suggestions);
    } finally {
      sc.clear();
    }
  }

  /** Posterior ranking: adds ln s(c) to every candidate reached through a pair; without a published s(c) it is out. */
  private static void addPriors(SuggestIndex.Priors priors, Scratch sc) {
    for (int i = 0; i < sc.usedCount; i++) {
      int slot = sc.used[i];
      if (sc.flags[slot] < 0) {
        continue; // a basket item
      }
      double prior = priors.lnSupportOf(sc.keys[slot]);
      if (Double.isNaN(prior)) {
        sc.flags[slot] &= ~ELIGIBLE;
      } else {
        sc.scores[slot] += prior;
      }
    }
  }

  /**
   * Posterior ranking: the published items that no basket item's pair reached, taken as independent of the basket
   * (every lift 1, score ln s(c)), most frequent first, until no further one can enter the best {@code count}. Such an
   * item's rules x ⇒ c have confidence s(c) and support s(x)·s(c) under independence; it is eligible when s(c) lies in
   * the band and the largest s(x)·s(c) over the basket reaches the support floor.
   */
  private static void addIndependent(SuggestionRequest request, SuggestIndex index, SuggestIndex.Priors priors,
      Scratch sc, PriorityQueue<Integer> best) {
    double[] lnSupport = priors.lnSupport();
    double maxBasketSupport = 0;
    for (String item : request.basket()) {
      Integer id = index.id(item);
      double lnS = id == null ? Double.NaN : priors.lnSupportOf(id);
      if (!Double.isNaN(lnS)) {
        maxBasketSupport = Math.max(maxBasketSupport, Math.exp(lnS));
      }
    }
    for (int id : priors.popular()) {
      double prior = lnSupport[id];
      if (best.size() >= request.count() && prior < sc.scores[best.peek()]) {
        return; // sorted by prior: no later item can enter
      }
      if (sc.find(id) >= 0 || Collections.binarySearch(request.basket(), index.name(id)) >= 0) {
        continue; // a candidate already scored, or a basket item (the basket is sorted)
      }
      double support = Math.exp(prior);
      if (!(support >= request.minConfidence() && support <= request.maxConfidence()
          && maxBasketSupport * support >= request.minSupport())) {
        continue;
      }
      int slot = sc.slot(id);
      sc.scores[slot] = prior;
      sc.flags[slot] = SEEN | ELIGIBLE;
      best.add(slot);
      if (best.size() > request.count()) {
        best.poll();
      }
    }
  }

  /** The evidence of candidate {@code id}: every basket item whose row holds it. */
  private static List<Evidence> evidence(SuggestionRequest request, SuggestIndex.Horizon h, Scratch sc, int known,
      int id) {
    List<Evidence> list = new ArrayList<>(known);
    Measure measure = request.measure();
    for (int b = 0; b < known; b++) {
      SuggestIndex.Entries en = h.entries(sc.basket[b]);
      double[] phi = en.contributions(measure);
      for (int e = 0; e < en.size(); e++) {
        if (en.other[e] != id || Double.isNaN(phi[e])) {
          continue;
        }
        PairStats pair = en.stats[e];
        PairMeasures m = pair.measures();
        boolean forward = en.forward[e];
        String basketItem = forward ? pair.itemA() : pair.itemB();
        double confidence = en.confidence[e];
        boolean inBand = confidence >= request.minConfidence() && confidence <= request.maxConfidence()
            && en.support[e] >= request.minSupport();
        list.add(new Evidence(basketItem, pair.horizon(), measure.wireName(), directed(measure, m, forward), phi[e], inBand,
            m.lift(), m.liftLower(), m.liftUpper(), m.shrunkLift(), confidence, m.support(), pair.counts().countAB().value()));
        break;
      }
    }
    list.sort(Comparator.comparingDouble(Evidence::contribution).reversed().thenComparing(Evidence::basketItem));
    return list;
  }

  /** The measure's value for the rule x ⇒ c; {@code forward} when x is the pair's itemA. */
  public static double directed(Measure measure, PairMeasures m, boolean forward) {
    switch (measure) {
      case CONFIDENCE:
        return forward ? m.confidenceAB() : m.confidenceBA();
      case CONVICTION:
        return forward ? m.convictionAB() : m.convictionBA();
      case CONVICTION_UNADJUSTED:
        return forward ? m.convictionABUnadjusted() : m.convictionBAUnadjusted();
      default:
        return measure.of(m);
    }
  }

  /** φ of the class comment: ln of the clamped value for ratio measures, the value otherwise. */
  public static double contribution(Measure measure, double value) {
    switch (measure) {
      case LIFT:
      case SHRUNK_LIFT:
      case LIFT_LOWER:
      case CONVICTION:
      case LIFT_UNADJUSTED:
      case SHRUNK_LIFT_UNADJUSTED:
      case LIFT_LOWER_UNADJUSTED:
      case CONVICTION_UNADJUSTED:
        return Math.log(Math.min(MAX_RATIO, Math.max(MIN_RATIO, value)));
      default:
        return value;
    }
  }
}
