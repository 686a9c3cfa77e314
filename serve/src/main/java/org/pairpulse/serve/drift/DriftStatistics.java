package org.pairpulse.serve.drift;

import org.apache.commons.math3.special.Erf;
import org.pairpulse.sketch.stats.PairCounts;

/**
 * The two-sample test behind emerging and fading pairs: is the pair's lift in one horizon
 * different from its lift in another?
 *
 * <h2>Model</h2>
 * In each horizon the pair count is read as a Poisson count with mean λ·E, where
 * E = n_a·n_b / N is the count expected under independence (the "exposure") and λ is the lift.
 * Given the total T = x + y of the two counts, x is Binomial(T, p₀) under H₀: λ_recent =
 * λ_baseline, with p₀ = E_x / (E_x + E_y): the conditional test of two Poisson rates (Przyborowski
 * and Wilenski 1940; the G² form as in Sokal &amp; Rohlf, Biometry, the G-test of goodness of fit).
 * <pre>
 *   G² = 2 [ x ln(x / (T p₀)) + y ln(y / (T (1 − p₀))) ],   0·ln 0 = 0
 * </pre>
 * Under H₀, G² is asymptotically χ² with one degree of freedom; the signed root is positive when
 * x/E_x &gt; y/E_y (the lift rose). Because the exposures carry each horizon's item counts, a
 * change of popularity alone (a flash sale on one item) moves E, not λ, and raises no drift.
 *
 * <h2>Effective counts</h2>
 * A decay horizon's counts are sums of weights w = 2^(−age/half-life), normalised so that one fresh
 * basket weighs 1 (as the pair table publishes them). Such a sum is not a Poisson count: for a
 * steady stream of rate r its mean is r/λ and its variance r/(2λ). Its effective number of baskets
 * (Kish's effective sample size (Σw)²/Σw²) is therefore 2r/λ, twice the decayed count, and
 * {@link #decayEffectiveCountFactor} = 2 turns decayed counts into effective counts before the
 * test (counts and exposures alike, so lifts do not change). Window counts are basket counts
 * (factor 1). The baseline window also contains the recent baskets; that overlap pulls the two
 * lifts together, toward fewer alerts.
 *
 * <h2>Sketch error</h2>
 * {@link #conservativeRootG2} reads the pair counts at the bounds that weaken the observed
 * direction: for a rise, the lower bound now and the upper bound in the baseline; for a fall, the
 * reverse. If the direction flips at the bounds the statistic is 0.
 */
public final class DriftStatistics {
  private DriftStatistics() {}

  /**
   * Signed √G² of the two-rate test above; 0 when there is no evidence (T = 0), NaN when an
   * exposure is not positive and finite.
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

  /** E = n_a·n_b / N from point values clamped to N; NaN when N or a marginal is 0. */
  public static double exposure(PairCounts counts) {
    double baskets = counts.baskets();
    double a = Math.min(counts.countA().value(), baskets);
    double b = Math.min(counts.countB().value(), baskets);
    double e = a * b / baskets;
    return e > 0 && !Double.isInfinite(e) ? e : Double.NaN;
  }

  /** Effective baskets per unit of decayed count for a steady stream: (Σw)²/Σw² ÷ Σw = 2. */
  public static final double DECAY_EFFECTIVE_COUNT_FACTOR = 2.0;

  /** The factor turning a horizon's counts into effective counts: 2 for a decay, 1 for a window. */
  public static double decayEffectiveCountFactor(boolean window) {
    return window ? 1.0 : DECAY_EFFECTIVE_COUNT_FACTOR;
  }

  /**
   * Signed √G² comparing {@code recent} with {@code baseline}, counts read at the bounds that
   * weaken the observed direction (see the class comment); NaN when an exposure is undefined.
   * Counts must already be effective counts.
   */
  public static double conservativeRootG2(PairCounts recent, PairCounts baseline) {
    return conservativeRootG2(recent, 1.0, baseline, 1.0);
  }

  /**
   * {@link #conservativeRootG2(PairCounts, PairCounts)} with each horizon's counts first multiplied by
   * its effective-count factor (no allocation: called for every published pair at every refresh).
   */
  public static double conservativeRootG2(PairCounts recent, double recentFactor, PairCounts baseline,
      double baselineFactor) {
    double exposureRecent = exposure(recent) * recentFactor;
    double exposureBaseline = exposure(baseline) * baselineFactor;
    if (Double.isNaN(exposureRecent) || Double.isNaN(exposureBaseline)) {
      return Double.NaN;
    }
    boolean rose = recent.countAB().value() * recentFactor / exposureRecent
        >= baseline.countAB().value() * baselineFactor / exposureBaseline;
    double x = (rose ? recent.countAB().lower() : recent.countAB().upper()) * recentFactor;
    double y = (rose ? baseline.countAB().upper() : baseline.countAB().lower()) * baselineFactor;
    double root = signedRootG2(x, exposureRecent, y, exposureBaseline);
    return (root > 0) == rose || root == 0 ? root : 0.0;
  }

  /** P(χ²₁ ≥ s²) = erfc(|s| / √2): the two-sided p-value of a signed root statistic s. */
  public static double pValue(double signedRoot) {
    return Double.isNaN(signedRoot) ? Double.NaN : Erf.erfc(Math.abs(signedRoot) / Math.sqrt(2.0));
  }
}
