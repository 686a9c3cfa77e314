package org.pairpulse.serve.drift;

import org.apache.commons.math3.special.Erf;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairCounts;

/**
 * The two tests behind emerging and fading pairs, each comparing a recent period with a reference
 * period for one pair, and kept apart because they answer different questions.
 *
 * <h2>(a) Rate: does the pair occur together more or less often per basket?</h2>
 * In each period the pair count is read as a Poisson count with mean ρ·N (N the period's baskets,
 * ρ the pair's rate per basket). Given the total T = x + y of the two counts, x is Binomial(T, p₀)
 * under H₀: ρ_recent = ρ_reference, with p₀ = N_x / (N_x + N_y): the conditional test of two
 * Poisson rates (Przyborowski and Wilenski 1940), in its G² form (Sokal &amp; Rohlf, Biometry, the
 * G-test of goodness of fit):
 * <pre>
 *   G² = 2 [ x ln(x / (T p₀)) + y ln(y / (T (1 − p₀))) ],   0·ln 0 = 0
 * </pre>
 * asymptotically χ²₁ under H₀; the signed root is positive when the rate rose. A pair that rises
 * from nothing (y ≈ 0) is the strongest case of this test, not a special one.
 *
 * <h2>(b) Association: has it changed beyond what the items' own popularity explains?</h2>
 * Lift is not margin-free: when an item is bought mostly with the pair, its own count rises with
 * the pair and lift can fall while the pair sells more than ever. The odds ratio of the pair's 2×2
 * table (a = n_ab, b = n_a − n_ab, c = n_b − n_ab, d = N − n_a − n_b + n_ab) does not move with
 * the margins. The test compares it between the two periods: the likelihood-ratio G² of the
 * log-linear model of homogeneous association [AB][AP][BP] against the saturated model of the
 * 2×2×2 table (Agresti, Categorical Data Analysis, 2nd ed. 2002, section 8.2, the no-three-factor-
 * interaction model; Breslow and Day 1980 test the same hypothesis with a score statistic). Its
 * fit has no closed form; with two strata it is one equation in the common odds ratio ψ: each
 * stratum's fitted â_k(ψ) solves â(N − n_a − n_b + â) = ψ (n_a − â)(n_b − â) (a quadratic), and
 * ψ makes Σ â_k = Σ a_k (the AB margin); â_k increases with ψ, so bisection on ln ψ finds it.
 * G² = 2 Σ obs · ln(obs / fit) over the eight cells, χ²₁ under H₀; its sign is that of
 * a_recent − â_recent (the recent odds ratio above the common one: the association rose). A move
 * of one item's popularity changes b (or c) and N, not the odds ratio, and so raises nothing here.
 *
 * <h2>Effective counts</h2>
 * A decay horizon's counts are sums of weights w = 2^(−age/half-life), normalised so that one fresh
 * basket weighs 1. Such a sum is not a Poisson count: for a steady stream of rate r that started T
 * ago, Σw = r(1 − e^(−λT))/λ and Σw² = r(1 − e^(−2λT))/(2λ), so the effective number of baskets
 * (Kish's (Σw)²/Σw²) per unit of decayed count is Σw/Σw² = 2/(1 + e^(−λT)) ({@link
 * #effectiveCountFactor}): 1 for a young stream, 2 once T is many half-lives. Counts are multiplied by
 * it before a test (counts and N alike, so rates and odds ratios do not change). Window counts are
 * basket counts (factor 1).
 *
 * <h2>Sketch error</h2>
 * A pair admitted to the tracked table late carries the time before its admission as a count-min
 * estimate: its reference count lies in [lower, upper], where upper is the sketch estimate itself
 * (a count-min never undercounts, so it bounds the true count always, not with probability
 * 1 − δ), and lower subtracts ε·W. Both tests are read at the bounds that weaken the observed
 * direction (for a rise: recent at its lower bound, reference at its upper bound; for a fall the
 * reverse), and are 0 when the direction flips at the bounds. Both statistics grow with the recent
 * count and fall with the reference count in the direction of a rise (the conditional binomial
 * tail is monotone in y for fixed x, and so is the fitted â), so a test read at the bounds is
 * conservative: its false-alarm rate is at most the nominal one. The reference is drift's long decay
 * (the engine's tracking decay), whose sketch is ten times wider than a window pane's: for a pair
 * the sketch bounds near zero before its admission, a count that is far above that bound now is
 * evidence of a rise, and the test finds it. Counts are also capped by the margins (n_ab ≤ min(n_a,
 * n_b)), which bounds a pair whose item was rare before near zero whatever the pair sketch says.
 */
public final class DriftStatistics {
  private DriftStatistics() {}

  /**
   * Signed √G² of the two-rate test above: counts x and y with exposures (the expected count per unit
   * rate; N for the rate test); 0 when there is no evidence (T = 0), NaN when an exposure is not
   * positive and finite.
   */
  public static double signedRootG2(double x, double exposureX, double y, double exposureY) {
    if (!(exposureX > 0 && exposureY > 0) || Double.isInfinite(exposureX) || Double.isInfinite(exposureY)) {
      return Double.NaN;
    }
    double total = x + y;
    if (!(total > 0)) {
      return 0.0;
    }
    double share = exposureX / (exposureX + exposureY);
    double gSquared = 2.0 * (xLogXOver(x, total * share) + xLogXOver(y, total * (1.0 - share)));
    double root = Math.sqrt(Math.max(0.0, gSquared));
    return x / exposureX >= y / exposureY ? root : -root;
  }

  private static double xLogXOver(double observed, double expected) {
    return observed <= 0 ? 0.0 : observed * Math.log(observed / expected);
  }

  /**
   * Effective baskets per unit of decayed count of a decay with half-life h whose stream began
   * {@code ageMillis} ago: 2 / (1 + 2^(−age/h)); 1 for a window ({@code halfLifeMillis} ≤ 0).
   */
  public static double effectiveCountFactor(long halfLifeMillis, long ageMillis) {
    if (halfLifeMillis <= 0) {
      return 1.0;
    }
    return 2.0 / (1.0 + Math.pow(2.0, -Math.max(0, ageMillis) / (double) halfLifeMillis));
  }

  /**
   * The counts of a long decay less those of a short one on the same stream: the reference period with the
   * recent hours taken out. Each basket of age t then weighs 2^(−t/h_long) − 2^(−t/h_short) ≥ 0: about 0 for
   * the last hours (both weights near 1), the long decay's weight for older baskets. Without it, a pair
   * that rose would carry its own rise into the reference, and the comparison would fade while the change
   * lasts. Linear, so N, n_a, n_b and n_ab subtract alike: a bound of the difference is the difference of
   * opposite bounds, clamped at 0 (lower = L_long − U_short, upper = U_long − L_short).
   */
  public static PairCounts excluding(PairCounts longer, PairCounts shorter) {
    double baskets = Math.max(0, longer.baskets() - shorter.baskets());
    return new PairCounts(baskets, minus(longer.countA(), shorter.countA()), minus(longer.countB(), shorter.countB()),
        minus(longer.countAB(), shorter.countAB()));
  }

  private static Estimate minus(Estimate longer, Estimate shorter) {
    double upper = Math.max(0, longer.upper() - shorter.lower());
    double lower = Math.min(upper, Math.max(0, longer.lower() - shorter.upper()));
    double value = Math.min(upper, Math.max(lower, longer.value() - shorter.value()));
    return new Estimate(value, lower, upper);
  }

  /**
   * Effective baskets per unit of count of the difference weighting above (w = e^(−λ₁t) − e^(−λ₂t), λ₁ &lt; λ₂)
   * on a steady stream that began {@code ageMillis} ago: Σw/Σw² with Σw = I(λ₁) − I(λ₂) and
   * Σw² = I(2λ₁) − 2 I(λ₁ + λ₂) + I(2λ₂), where I(μ) = (1 − e^(−μT))/μ.
   */
  public static double effectiveCountFactor(long longHalfLifeMillis, long shortHalfLifeMillis, long ageMillis) {
    if (longHalfLifeMillis <= 0 || shortHalfLifeMillis <= 0 || shortHalfLifeMillis >= longHalfLifeMillis) {
      throw new IllegalArgumentException("need 0 < short < long half-life, got " + shortHalfLifeMillis + ", "
          + longHalfLifeMillis);
    }
    double age = Math.max(1, ageMillis);
    double l1 = Math.log(2) / longHalfLifeMillis;
    double l2 = Math.log(2) / shortHalfLifeMillis;
    double sum = integral(l1, age) - integral(l2, age);
    double squares = integral(2 * l1, age) - 2 * integral(l1 + l2, age) + integral(2 * l2, age);
    return squares > 0 && sum > 0 ? sum / squares : 1.0;
  }

  /** ∫₀ᵀ e^(−μt) dt. */
  private static double integral(double mu, double t) {
    return -Math.expm1(-mu * t) / mu;
  }

  /** A period's counts in effective units, with n_ab read at a chosen point and capped by the margins. */
  record Period(double baskets, double countA, double countB, double countAB) {
    /** The period at the pair count's lower ({@code low}) or upper bound, margins at their values. */
    static Period of(PairCounts counts, double factor, boolean low) {
      return at(counts, factor, low ? counts.countAB().lower() : counts.countAB().upper());
    }

    /** The period at the pair count's point value. */
    static Period value(PairCounts counts, double factor) {
      return at(counts, factor, counts.countAB().value());
    }

    private static Period at(PairCounts counts, double factor, double countAB) {
      double n = counts.baskets();
      double a = Math.min(counts.countA().value(), n);
      double b = Math.min(counts.countB().value(), n);
      double ab = Math.min(countAB, Math.min(a, b));
      ab = Math.max(ab, Math.max(0, a + b - n));
      return new Period(n * factor, a * factor, b * factor, ab * factor);
    }

  }

  /**
   * Signed √G² of the rate test between {@code recent} and {@code reference}, read at the bounds that
   * weaken the observed direction (see the class comment); NaN when a period has no baskets.
   *
   * @param recentFactor effective count factor of the recent period ({@link #effectiveCountFactor})
   * @param referenceFactor that of the reference period
   */
  public static double rateRootG2(PairCounts recent, double recentFactor, PairCounts reference,
      double referenceFactor) {
    if (!(recent.baskets() > 0 && reference.baskets() > 0)) {
      return Double.NaN;
    }
    boolean rose = recent.countAB().value() / recent.baskets() >= reference.countAB().value() / reference.baskets();
    Period x = Period.of(recent, recentFactor, rose);
    Period y = Period.of(reference, referenceFactor, !rose);
    double root = signedRootG2(x.countAB(), x.baskets(), y.countAB(), y.baskets());
    return (root > 0) == rose || root == 0 ? root : 0.0;
  }

  /**
   * Signed √G² of the association test (homogeneous odds ratio between the two periods), read at the
   * bounds that weaken the observed direction; positive when the association rose. NaN when a period
   * has no baskets.
   */
  public static double associationRootG2(PairCounts recent, double recentFactor, PairCounts reference,
      double referenceFactor) {
    if (!(recent.baskets() > 0 && reference.baskets() > 0)) {
      return Double.NaN;
    }
    double pointRoot = interactionRootG2(Period.value(recent, recentFactor), Period.value(reference, referenceFactor),
        true);
    boolean rose = pointRoot >= 0;
    Period x = Period.of(recent, recentFactor, rose);
    Period y = Period.of(reference, referenceFactor, !rose);
    double root = interactionRootG2(x, y, false);
    return (root > 0) == rose || root == 0 ? root : 0.0;
  }

  /**
   * Signed √G² of the no-three-factor-interaction test on two 2×2 tables given by their cells
   * (a, b, c, d) = (n_ab, n_a − n_ab, n_b − n_ab, N − n_a − n_b + n_ab); positive when the first
   * table's odds ratio is the larger. 0 when a table has an empty margin (no information).
   */
  public static double interactionRootG2(double a1, double b1, double c1, double d1, double a2, double b2, double c2,
      double d2) {
    Period first = new Period(a1 + b1 + c1 + d1, a1 + b1, a1 + c1, a1);
    Period second = new Period(a2 + b2 + c2 + d2, a2 + b2, a2 + c2, a2);
    return interactionRootG2(first, second, false);
  }

  /** Bisection steps on ln ψ over [−60, 60]: the width ends below 10⁻¹⁵ of the bracket. */
  private static final int BISECTION_STEPS = 64;

  private static double interactionRootG2(Period x, Period y, boolean pointOnly) {
    if (!informative(x) || !informative(y)) {
      return 0.0;
    }
    double target = x.countAB() + y.countAB();
    double lo = -60.0;
    double hi = 60.0;
    for (int i = 0; i < BISECTION_STEPS; i++) {
      double mid = 0.5 * (lo + hi);
      double psi = Math.exp(mid);
      if (fitted(x, psi) + fitted(y, psi) < target) {
        lo = mid;
      } else {
        hi = mid;
      }
    }
    double psi = Math.exp(0.5 * (lo + hi));
    double fitX = fitted(x, psi);
    boolean rose = x.countAB() >= fitX;
    if (pointOnly) {
      return rose ? 1.0 : -1.0;
    }
    double fitY = fitted(y, psi);
    double gSquared = 2.0 * (cellsG2(x, fitX) + cellsG2(y, fitY));
    double root = Math.sqrt(Math.max(0.0, gSquared));
    return rose ? root : -root;
  }

  /** A table with both items and their absences present: otherwise its odds ratio carries nothing. */
  private static boolean informative(Period p) {
    return p.countA() > 0 && p.countB() > 0 && p.countA() < p.baskets() && p.countB() < p.baskets();
  }

  /** Σ obs ln(obs/fit) over a period's four cells, the fit given by its fitted n_ab (margins are the observed ones). */
  private static double cellsG2(Period p, double fitAB) {
    return xLogXOver(p.countAB(), fitAB)
        + xLogXOver(p.countA() - p.countAB(), p.countA() - fitAB)
        + xLogXOver(p.countB() - p.countAB(), p.countB() - fitAB)
        + xLogXOver(p.baskets() - p.countA() - p.countB() + p.countAB(), p.baskets() - p.countA() - p.countB() + fitAB);
  }

  /**
   * The n_ab of a 2×2 table with the period's margins and odds ratio ψ: the root in [max(0, n_a + n_b − N),
   * min(n_a, n_b)] of (1 − ψ)â² + (N − n_a − n_b + ψ(n_a + n_b))â − ψ n_a n_b = 0, in its stable form.
   */
  static double fitted(Period p, double psi) {
    double na = p.countA();
    double nb = p.countB();
    double low = Math.max(0, na + nb - p.baskets());
    double high = Math.min(na, nb);
    double quadratic = 1.0 - psi;
    double linear = p.baskets() - na - nb + psi * (na + nb);
    double constant = -psi * na * nb;
    double root;
    if (Math.abs(quadratic) < 1e-12 * Math.max(1.0, Math.abs(linear))) {
      root = -constant / linear;
    } else {
      double disc = Math.sqrt(Math.max(0.0, linear * linear - 4.0 * quadratic * constant));
      // the root inside the bracket: q = −(B + sign(B)·√disc)/2, roots q/A and C/q
      double q = -0.5 * (linear + Math.copySign(disc, linear));
      double r1 = q / quadratic;
      double r2 = constant / q;
      root = r1 >= low - 1e-9 * high && r1 <= high * (1 + 1e-9) ? r1 : r2;
    }
    return Math.min(high, Math.max(low, root));
  }

  /**
   * The recent odds ratio over the reference one, ln scale, with 0.5 added to every cell (Haldane
   * 1956), read at the pair counts' values.
   */
  public static double logOddsRatioRatio(PairCounts recent, double recentFactor, PairCounts reference,
      double referenceFactor) {
    return woolfLog(Period.value(recent, recentFactor)) - woolfLog(Period.value(reference, referenceFactor));
  }

  /**
   * Whether the association is shown unchanged within a factor {@code ratio}: the interval ln(OR ratio)
   * ± z·SE (Woolf 1955, 0.5 added to every cell) lies inside (−ln ratio, ln ratio) at both readings of
   * the pair counts' bounds (recent low with reference high, and the reverse). A move of popularity
   * alone on a pair with this much evidence is then explained by the margins.
   */
  public static boolean associationShownUnchanged(PairCounts recent, double recentFactor, PairCounts reference,
      double referenceFactor, double z, double ratio) {
    double limit = Math.log(ratio);
    for (int reading = 0; reading < 2; reading++) {
      boolean recentLow = reading == 0;
      Period x = Period.of(recent, recentFactor, recentLow);
      Period y = Period.of(reference, referenceFactor, !recentLow);
      double centre = woolfLog(x) - woolfLog(y);
      double se = Math.sqrt(woolfVariance(x) + woolfVariance(y));
      if (!(Math.abs(centre) + z * se < limit)) {
        return false;
      }
    }
    return true;
  }

  private static double woolfLog(Period p) {
    double[] cells = cells(p);
    return Math.log(cells[0]) + Math.log(cells[3]) - Math.log(cells[1]) - Math.log(cells[2]);
  }

  private static double woolfVariance(Period p) {
    double[] cells = cells(p);
    return 1 / cells[0] + 1 / cells[1] + 1 / cells[2] + 1 / cells[3];
  }

  private static double[] cells(Period p) {
    double ab = p.countAB();
    return new double[] {ab + 0.5, p.countA() - ab + 0.5, p.countB() - ab + 0.5,
        Math.max(0, p.baskets() - p.countA() - p.countB() + ab) + 0.5};
  }

  /** P(χ²₁ ≥ s²) = erfc(|s| / √2): the two-sided p-value of a signed root statistic s. */
  public static double pValue(double signedRoot) {
    return Double.isNaN(signedRoot) ? Double.NaN : Erf.erfc(Math.abs(signedRoot) / Math.sqrt(2.0));
  }

  /**
   * The root a test needs so that {@code tests} tests at it keep the false-alarm bound of one test at {@code root}
   * (Bonferroni): the p-value of {@code root} divided by {@code tests}, turned back into a root; {@code root} itself
   * for one test. E.g. 5.0 for one test (p 5.7·10⁻⁷) is 5.13 for two.
   */
  public static double rootForTests(double root, int tests) {
    if (tests < 1) {
      throw new IllegalArgumentException("tests must be >= 1, got " + tests);
    }
    if (tests == 1 || !(root > 0)) {
      return root;
    }
    return Math.sqrt(2.0) * Erf.erfcInv(pValue(root) / tests);
  }
}
