package org.pairpulse.serve.suggest;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.PriorityQueue;
import java.util.Set;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * The slow, obvious suggester: the first implementation, kept as the oracle of {@link Suggester}
 * (same answers, to the last bit, on any table).
 */
final class SimpleSuggester {
  private final int maxNeighboursPerItem;

  SimpleSuggester(int maxNeighboursPerItem) {
    this.maxNeighboursPerItem = maxNeighboursPerItem;
  }
  /** One candidate's running tally. */
  private static final class Candidate {
    final String item;
    double score;
    boolean eligible;
    boolean bundle;
    final List<PairStats> pairs = new ArrayList<>(2);
    final List<String> from = new ArrayList<>(2);

    Candidate(String item) {
      this.item = item;
    }
  }

  /**
   * Suggestions for {@code request} from {@code table}. An unknown horizon, or a basket whose items
   * are all unknown, gives an empty list (never an exception).
   */
  SuggestionResult suggest(FlooredTable table, SuggestionRequest request) {
    List<String> basket = request.basket();
    Set<String> inBasket = new HashSet<>(basket);
    Map<String, Candidate> candidates = new HashMap<>();
    List<String> unknown = new ArrayList<>();
    Measure measure = request.measure();
    for (String basketItem : basket) {
      List<PairStats> neighbours = table.neighbours(basketItem, request.horizon());
      if (neighbours.isEmpty()) {
        unknown.add(basketItem);
        continue;
      }
      int limit = Math.min(neighbours.size(), maxNeighboursPerItem);
      for (int i = 0; i < limit; i++) {
        PairStats pair = neighbours.get(i);
        String other = pair.other(basketItem);
        if (inBasket.contains(other)) {
          continue;
        }
        PairMeasures m = pair.measures();
        double value = Suggester.directed(measure, m, pair.itemA().equals(basketItem));
        if (Double.isNaN(value)) {
          continue;
        }
        Candidate candidate = candidates.computeIfAbsent(other, Candidate::new);
        candidate.score += Suggester.contribution(measure, value);
        candidate.pairs.add(pair);
        candidate.from.add(basketItem);
        if (m.isBundle()) {
          candidate.bundle = true;
        }
        // the association ranking lists only pairs that pass the offer screen (BH over the horizon's published pairs)
        boolean screened = request.ranking() == SuggestionRanking.POSTERIOR
            || org.pairpulse.serve.floor.OfferScreen.of(table).horizon(request.horizon()).passes(pair);
        if (inBand(request, m, pair.itemA().equals(basketItem)) && screened) {
          candidate.eligible = true;
        }
      }
    }
    if (request.ranking() == SuggestionRanking.POSTERIOR) {
      posterior(table, request, inBasket, candidates);
    }
    Comparator<Candidate> worstFirst = Comparator.comparingDouble((Candidate c) -> c.score)
        .thenComparing((Candidate c) -> c.item, Comparator.reverseOrder());
    PriorityQueue<Candidate> best = new PriorityQueue<>(request.count() + 1, worstFirst);
    for (Candidate candidate : candidates.values()) {
      if (!candidate.eligible || (candidate.bundle && !request.includeBundles())) {
        continue;
      }
      best.add(candidate);
      if (best.size() > request.count()) {
        best.poll();
      }
    }
    List<Candidate> ranked = new ArrayList<>(best);
    ranked.sort(worstFirst.reversed());
    List<Suggestion> suggestions = new ArrayList<>(ranked.size());
    for (Candidate candidate : ranked) {
      suggestions.add(new Suggestion(candidate.item, candidate.score, evidence(request, candidate)));
    }
    return new SuggestionResult(basket, unknown, request.horizon(), measure.wireName(), table.version(), suggestions);
  }

  /** ln(n_c / N) of a published item, NaN otherwise: the posterior ranking's prior. */
  private static double lnSupport(FlooredTable table, String item, String horizon) {
    double support = table.itemCount(item, horizon).map(e -> e.value()).orElse(Double.NaN) / table.baskets(horizon);
    return support > 0 && !Double.isInfinite(support) ? Math.log(Math.min(1.0, support)) : Double.NaN;
  }

  /**
   * The posterior ranking, obviously: every candidate reached through a pair gets ln s(c) (or is dropped without
   * one); every other published item is a candidate scored ln s(c), eligible by its independence estimates.
   */
  private static void posterior(FlooredTable table, SuggestionRequest request, Set<String> inBasket,
      Map<String, Candidate> candidates) {
    String horizon = request.horizon();
    for (Candidate candidate : candidates.values()) {
      double prior = lnSupport(table, candidate.item, horizon);
      if (Double.isNaN(prior)) {
        candidate.eligible = false;
      } else {
        candidate.score += prior;
      }
    }
    double maxBasketSupport = 0;
    for (String item : inBasket) {
      double prior = lnSupport(table, item, horizon);
      if (!Double.isNaN(prior)) {
        maxBasketSupport = Math.max(maxBasketSupport, Math.exp(prior));
      }
    }
    for (String item : table.items(horizon).keySet()) {
      double prior = lnSupport(table, item, horizon);
      if (inBasket.contains(item) || candidates.containsKey(item) || Double.isNaN(prior)) {
        continue;
      }
      double support = Math.exp(prior);
      Candidate candidate = new Candidate(item);
      candidate.score = prior;
      candidate.eligible = support >= request.minConfidence() && support <= request.maxConfidence()
          && maxBasketSupport * support >= request.minSupport();
      candidates.put(item, candidate);
    }
  }

  private static List<Evidence> evidence(SuggestionRequest request, Candidate candidate) {
    List<Evidence> list = new ArrayList<>(candidate.pairs.size());
    for (int i = 0; i < candidate.pairs.size(); i++) {
      PairStats pair = candidate.pairs.get(i);
      String basketItem = candidate.from.get(i);
      boolean forward = pair.itemA().equals(basketItem);
      PairMeasures m = pair.measures();
      double value = Suggester.directed(request.measure(), m, forward);
      list.add(new Evidence(basketItem, pair.horizon(), request.measure().wireName(), value,
          Suggester.contribution(request.measure(), value), inBand(request, m, forward), m.lift(), m.liftLower(), m.liftUpper(),
          m.shrunkLift(), forward ? m.confidenceAB() : m.confidenceBA(), m.support(), pair.counts().countAB().value()));
    }
    list.sort(Comparator.comparingDouble(Evidence::contribution).reversed().thenComparing(Evidence::basketItem));
    return list;
  }

  private static boolean inBand(SuggestionRequest request, PairMeasures m, boolean forward) {
    double confidence = forward ? m.confidenceAB() : m.confidenceBA();
    return confidence >= request.minConfidence() && confidence <= request.maxConfidence()
        && m.support() >= request.minSupport();
  }
}
