package org.pairpulse.sketch.engine;

import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.MantelHaenszel;
import org.pairpulse.sketch.stats.SizeClasses;

/**
 * One horizon's basket-size strata at a refresh, and the stratified expected pair count with bounds, from what the
 * engine knows of each item:
 * <pre>
 *   E = Σ_c ρ_c · n_a,c·n_b,c / N_c,     ρ_c = N_c·K_c / M_c²  (K_c = Σ k(k − 1), M_c = Σ k over the class's baskets)
 * </pre>
 * the Mantel–Haenszel stratified form ({@link MantelHaenszel}) with a within-class size correction ρ_c. Inside a
 * class, independence is taken slot by slot: a basket of k distinct items has k(k − 1) ordered pairs of slots, and
 * an item fills a slot in proportion to its class count, so a pair's expected count is n_a,c·n_b,c·K_c/M_c². For a
 * class of one size k that is n_a,c·n_b,c/N_c·(k − 1)/k (two independent items meet less often in a small basket
 * than independent presence says, since a basket holds an item once); for a class of mixed sizes ρ_c grows with
 * their spread (E[k(k − 1)]/E[k]²), so the sizes inside a class with a spread (such as a coarse 6+, from 6 to hundreds) do not
 * inflate every pair of popular items. Without it (ρ_c = 1) the benchmark's heavy-tailed stream listed almost only
 * spurious pairs ({@code bench rules}, ops/README). A class with K_c = 0 (single items) adds nothing.
 *
 * <h2>What is known per class</h2>
 * N_c is exact (counted per pane and class). A tracked item's count splits into a part known exactly per class
 * (counted since its admission, {@link Counts#knownByClass}) and a remainder u of unknown class (panes before its
 * admission, read from the sketches, and the estimate it was admitted with); an untracked item's whole count is of
 * unknown class. u carries the item count's bounds: u ∈ [n.lower − known, n.upper − known].
 *
 * <h2>Bounds of E</h2>
 * E is bilinear in the two items' class allocations, so over all ways of placing u_a and u_b into classes (any class
 * with N_c &gt; 0; a pairless class takes mass but adds nothing) its extremes lie at vertices: all of u_a in one class
 * c_a, all of u_b in one class c_b. {@link #expected} finds the extreme (c_a, c_b) in O(classes), with u at its upper bound for E's upper
 * bound and at its lower bound for E's lower bound, so E's bounds hold whenever the item counts' bounds do
 * (probability ≥ 1 − δ per sketch, as theirs). An item counted exactly from its first basket has u = 0 and an exact E.
 *
 * <h2>Point value</h2>
 * The unknown remainder is spread over the classes in proportion to (known_c + π_c) / (known + 1), π_c = M_c/M
 * the share of item occurrences in class c: the item's own class mix where it has one, the stream's mix (where
 * independence puts an item) where it has none. Each class's n_c is capped at N_c.
 *
 * <h2>Dispersion of the pair count</h2>
 * A basket above the pair cap has its pairs sampled with step s: a pair present in it is counted with probability
 * 1/s and then weighs s ({@link PairSampling}). Its contribution has mean 1 and second moment s, so under the null
 * model a pair count with expectation E_c from class c has variance about d_c·E_c, d_c = Q_c / K_c, the class's pair
 * slots' mean step (Q_c = Σ k(k − 1)·s). The pair count's dispersion is then
 * <pre>
 *   φ = Σ_c d_c·E_c / Σ_c E_c  (≥ 1; 1 when no basket was above the cap)
 * </pre>
 * the variance-to-mean ratio of n_ab under the null model: the count weighs as n_ab / φ independent baskets, the
 * expectation of Kish's effective count (Σw)² / Σw² over the sampling (L. Kish, Survey Sampling, Wiley 1965, from
 * memory). It is taken from the strata, not from the pair's own weights: a test reads the variance its null model
 * gives, and under the Mantel–Haenszel assumption of one rate ratio in every class an associated pair spreads over
 * the classes as E does, so the same φ serves its interval. It costs one sum per pane and class, nothing per pair.
 *
 * <p>Refresh-time only (allocates); the hot path never reads this.
 */
final class SizeStrata {
  /** Unclassed baskets (a format-1 restore) above this share of N: the horizon publishes textbook measures. */
  static final double MAX_UNCLASSED_SHARE = 0.01;

  private final double[] baskets;
  /** N_c / ρ_c = M_c² / K_c: the class's baskets as the Mantel–Haenszel form reads them. */
  private final double[] effective;
  private final boolean[] pairless;
  private final double[] itemShares;
  /** d_c = Q_c / K_c: the mean pair-cap step of the class's pair slots (1 when none was capped). */
  private final double[] meanStep;

  /** One item's counts per class in this horizon. */
  record ItemClasses(double[] known, double unknownValue, double unknownLower, double unknownUpper, double[] pointShares) {}

  /** E with bounds and the pair count's dispersion φ (see the class comment). */
  record Expectation(Estimate expected, double dispersion) {}

  private SizeStrata(double[] baskets, double[] effective, boolean[] pairless, double[] itemShares, double[] meanStep) {
    this.meanStep = meanStep;
    this.baskets = baskets;
    this.effective = effective;
    this.pairless = pairless;
    this.itemShares = itemShares;
  }

  /**
   * The strata of {@code state} as of the engine's watermark, or null when the horizon publishes textbook measures:
   * one class configured, or more than {@value #MAX_UNCLASSED_SHARE} of its baskets of unknown class.
   */
  static SizeStrata of(PairEngine engine, HorizonState state) {
    SizeClasses classes = engine.config().sizeClasses();
    if (classes.count() < 2) {
      return null;
    }
    double total = Counts.baskets(engine, state);
    if (Counts.unclassedBaskets(engine, state) > MAX_UNCLASSED_SHARE * total) {
      return null;
    }
    double[] baskets = Counts.classBaskets(engine, state);
    double[] items = Counts.classItems(engine, state);
    double[] slots = Counts.classPairSlots(engine, state);
    double[] weightedSlots = Counts.classWeightedSlots(engine, state);
    double itemTotal = 0;
    for (double m : items) {
      itemTotal += m;
    }
    boolean[] pairless = new boolean[classes.count()];
    double[] shares = new double[classes.count()];
    double[] effective = new double[classes.count()];
    double[] meanStep = new double[classes.count()];
    for (int c = 0; c < shares.length; c++) {
      meanStep[c] = slots[c] > 0 ? Math.max(1.0, weightedSlots[c] / slots[c]) : 1.0;
      pairless[c] = classes.pairless(c) || !(slots[c] > 0);
      effective[c] = pairless[c] ? 0.0 : items[c] * items[c] / slots[c];
      shares[c] = itemTotal > 0 ? items[c] / itemTotal : 1.0 / shares.length;
    }
    return new SizeStrata(baskets, effective, pairless, shares, meanStep);
  }

  /** An item with {@code known} counted per class and {@code total} its whole count with bounds. */
  ItemClasses item(double[] known, Estimate total) {
    double knownSum = 0;
    for (double k : known) {
      knownSum += k;
    }
    double value = Math.max(0, total.value() - knownSum);
    double lower = Math.min(value, Math.max(0, total.lower() - knownSum));
    double upper = Math.max(value, total.upper() - knownSum);
    double[] shares = new double[known.length];
    for (int c = 0; c < known.length; c++) {
      shares[c] = (known[c] + itemShares[c]) / (knownSum + 1.0);
    }
    return new ItemClasses(known, value, lower, upper, shares);
  }

  /** An untracked item: its whole count is of unknown class. */
  ItemClasses untracked(Estimate total) {
    return item(new double[baskets.length], total);
  }

  /** E with bounds and φ for the pair of {@code a} and {@code b}; see the class comment. */
  Expectation expected(ItemClasses a, ItemClasses b) {
    int classes = baskets.length;
    double[] pointA = new double[classes];
    double[] pointB = new double[classes];
    for (int c = 0; c < classes; c++) {
      pointA[c] = Math.min(baskets[c], a.known()[c] + a.unknownValue() * a.pointShares()[c]);
      pointB[c] = Math.min(baskets[c], b.known()[c] + b.unknownValue() * b.pointShares()[c]);
      if (pairless[c]) {
        pointA[c] = 0; // a basket of one item holds no pair: a structural zero, not an expectation
      }
    }
    double value = MantelHaenszel.expected(pointA, pointB, effective);
    double stepped = 0;
    for (int c = 0; c < classes; c++) {
      stepped += meanStep[c] * perBasket(c, pointA[c] * pointB[c]);
    }
    double dispersion = value > 0 ? Math.max(1.0, stepped / value) : 1.0;
    double base = 0;
    for (int c = 0; c < classes; c++) {
      base += perBasket(c, a.known()[c] * b.known()[c]);
    }
    double upper = extremeVertex(base, a, b, a.unknownUpper(), b.unknownUpper(), true);
    double lower = extremeVertex(base, a, b, a.unknownLower(), b.unknownLower(), false);
    if (Double.isNaN(upper)) { // no baskets at all
      return new Expectation(Estimate.exact(0), 1.0);
    }
    return new Expectation(new Estimate(value, Math.max(0, Math.min(lower, value)), Math.max(upper, value)), dispersion);
  }

  /**
   * The largest ({@code largest}) or smallest vertex value over the classes with baskets, in O(classes): a vertex is
   * base + A(c_a) + B(c_b) + [c_a = c_b]·D(c_a) with A(c) = ρ_c·u_a·known_b,c/N_c, B likewise, D(c) = ρ_c·u_a·u_b/N_c,
   * so the extreme is the better of the best diagonal (c_a = c_b) and the best off-diagonal sum, which takes the
   * two best A and the two best B. NaN when no class has baskets. {@link #extremeVertexByEnumeration} is the
   * obvious version (tests).
   */
  private double extremeVertex(double base, ItemClasses a, ItemClasses b, double ua, double ub, boolean largest) {
    double sign = largest ? 1.0 : -1.0; // minimise by maximising the negated terms
    int bestA = -1;
    int secondA = -1;
    int bestB = -1;
    int secondB = -1;
    double diagonal = Double.NEGATIVE_INFINITY;
    for (int c = 0; c < baskets.length; c++) {
      if (!(baskets[c] > 0)) {
        continue;
      }
      double termA = sign * perBasket(c, ua * b.known()[c]);
      double termB = sign * perBasket(c, ub * a.known()[c]);
      diagonal = Math.max(diagonal, termA + termB + sign * perBasket(c, ua * ub));
      if (bestA < 0 || termA > sign * perBasket(bestA, ua * b.known()[bestA])) {
        secondA = bestA;
        bestA = c;
      } else if (secondA < 0 || termA > sign * perBasket(secondA, ua * b.known()[secondA])) {
        secondA = c;
      }
      if (bestB < 0 || termB > sign * perBasket(bestB, ub * a.known()[bestB])) {
        secondB = bestB;
        bestB = c;
      } else if (secondB < 0 || termB > sign * perBasket(secondB, ub * a.known()[secondB])) {
        secondB = c;
      }
    }
    if (bestA < 0) {
      return Double.NaN;
    }
    double best = diagonal;
    if (bestA != bestB) {
      best = Math.max(best, sign * (perBasket(bestA, ua * b.known()[bestA]) + perBasket(bestB, ub * a.known()[bestB])));
    } else {
      if (secondB >= 0) {
        best = Math.max(best, sign * (perBasket(bestA, ua * b.known()[bestA]) + perBasket(secondB, ub * a.known()[secondB])));
      }
      if (secondA >= 0) {
        best = Math.max(best, sign * (perBasket(secondA, ua * b.known()[secondA]) + perBasket(bestB, ub * a.known()[bestB])));
      }
    }
    return base + sign * best;
  }

  /** {@link #expected}'s bounds by trying every pair of classes: the slow, obvious version (tests). */
  double[] boundsByEnumeration(ItemClasses a, ItemClasses b) {
    int classes = baskets.length;
    double base = 0;
    for (int c = 0; c < classes; c++) {
      base += perBasket(c, a.known()[c] * b.known()[c]);
    }
    double upper = Double.NEGATIVE_INFINITY;
    double lower = Double.POSITIVE_INFINITY;
    for (int ca = 0; ca < classes; ca++) {
      for (int cb = 0; ca < classes && baskets[ca] > 0 && cb < classes; cb++) {
        if (baskets[cb] > 0) {
          upper = Math.max(upper, vertex(base, a, b, ca, cb, a.unknownUpper(), b.unknownUpper()));
          lower = Math.min(lower, vertex(base, a, b, ca, cb, a.unknownLower(), b.unknownLower()));
        }
      }
    }
    return new double[] {lower, upper};
  }

  /** E with u_a placed in class ca and u_b in class cb. */
  private double vertex(double base, ItemClasses a, ItemClasses b, int ca, int cb, double ua, double ub) {
    double sum = base + perBasket(ca, ua * b.known()[ca]) + perBasket(cb, ub * a.known()[cb]);
    if (ca == cb) {
      sum += perBasket(ca, ua * ub);
    }
    return sum;
  }

  /** ρ_c·x / N_c in a class that holds pairs, else 0. */
  private double perBasket(int c, double product) {
    return pairless[c] || !(effective[c] > 0) ? 0.0 : product / effective[c];
  }
}
