package org.pairpulse.sketch.engine;

/**
 * How a pair occurrence weighs in the Space-Saving rank that decides which pairs the engine tracks (their counts are
 * the same either way: this weight ranks, it does not count).
 *
 * <p>A basket of k items holds k(k − 1)/2 pairs, so under plain counting a basket of 40 items weighs 780 times a
 * basket of 2, and the pairs of a few large baskets (which are there by basket size, see the size-adjusted null model)
 * crowd the tracked table. Under {@link #FRACTIONAL} each occurrence weighs 1/(k − 1): every item of a basket spreads
 * one unit over its partners, so a basket weighs k/2 in all, and the rank of an independent pair is about n_a·n_b
 * over the stream's item weight, whatever the basket sizes. This is the fractional (normalised) counting of
 * co-occurrence networks: Newman, "Scientific collaboration networks. II. Shortest paths, weighted networks, and
 * centrality", Physical Review E 64, 016132 (2001), weighs a collaboration of n authors by 1/(n − 1); see Batagelj,
 * "On fractional approach to analysis of linked networks", Scientometrics 123 (2020) for the general form.
 *
 * <p>Space-Saving's guarantee holds for any positive weights (Metwally, Agrawal, El Abbadi 2005, with weighted
 * increments): every pair whose rank weight exceeds W_rank / capacity is tracked, W_rank being the stream's total
 * rank weight. Measured by {@code ops/pairpulse bench rules}: on heavy-tailed basket sizes the planted pairs tracked
 * and listed go from 13 of 20 (counting) to 19 of 20 (fractional) at the default capacity.
 */
public enum PairRanking {
  /** Each pair occurrence of a basket of k distinct items ranks 1/(k − 1) (times the pair cap's step): the default. */
  FRACTIONAL,
  /** Each pair occurrence ranks as it counts (times the pair cap's step): the most frequent pairs are tracked. */
  COUNT;

  /** The rank weight of one pair occurrence in a basket of {@code distinct} items, per unit of count weight. */
  public double factor(int distinct) {
    return this == FRACTIONAL && distinct > 2 ? 1.0 / (distinct - 1) : 1.0;
  }

  /** The configuration's spelling: {@code fractional}, {@code count}. */
  public String wireName() {
    return name().toLowerCase(java.util.Locale.ROOT);
  }

  /** Reads {@link #wireName()} (case-insensitive). */
  public static PairRanking parse(String text) {
    for (PairRanking ranking : values()) {
      if (ranking.wireName().equalsIgnoreCase(text.trim())) {
        return ranking;
      }
    }
    throw new IllegalArgumentException("pair ranking must be fractional or count, got '" + text + "'");
  }
}
