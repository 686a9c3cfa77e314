package org.pairpulse.serve.drift;

import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * One pair's comparison of {@code recent} against {@code baseline} at one table version: the
 * evidence an emerging, fading or new-bundle alert carries.
 *
 * @param pair the pair
 * @param signedRootG2 signed √G² of the two-rate test ({@link DriftStatistics#conservativeRootG2}); positive: lift rose
 * @param pValue its two-sided p-value
 * @param recentLift lift in recent
 * @param baselineLift lift in baseline
 * @param liftRatio lift recent / lift baseline (the effect size; significance comes from the G² test, so a
 *     thin pair cannot pass on its ratio alone)
 * @param recentPairBaskets n_ab in recent (decayed units)
 * @param baselinePairBaskets n_ab in baseline (baskets)
 * @param recentMinConfidence the smaller of the two confidences in recent
 * @param recentBundle whether the pair is a bundle pair in recent
 * @param baselineBundle whether it is one in baseline
 * @param trackedSinceMillis event time at which the pair entered the tracked table
 */
public record DriftFinding(PairKey pair, double signedRootG2, double pValue, double recentLift, double baselineLift,
    double liftRatio, double recentPairBaskets, double baselinePairBaskets, double recentMinConfidence,
    boolean recentBundle, boolean baselineBundle, long trackedSinceMillis) {

  /**
   * The finding for one pair from its statistics in the two horizons; {@code recentFactor} and
   * {@code baselineFactor} turn each horizon's counts into effective counts
   * ({@link DriftStatistics#decayEffectiveCountFactor}).
   */
  public static DriftFinding of(PairStats recent, PairStats baseline, double recentFactor, double baselineFactor) {
    PairMeasures r = recent.measures();
    PairMeasures b = baseline.measures();
    double root = DriftStatistics.conservativeRootG2(recent.counts(), recentFactor, baseline.counts(), baselineFactor);
    return new DriftFinding(PairKey.of(recent.itemA(), recent.itemB()), root, DriftStatistics.pValue(root), r.lift(),
        b.lift(), r.lift() / b.lift(), recent.counts().countAB().value(),
        baseline.counts().countAB().value(), Math.min(r.confidenceAB(), r.confidenceBA()), r.isBundle(), b.isBundle(),
        recent.trackedSinceMillis());
  }

  /**
   * Whether a pair could meet any entry condition: a cheap test on its statistics that allocates
   * nothing, so the monitor builds findings only for the few pairs that pass it.
   */
  static boolean mayEnter(PairStats recent, PairStats baseline, double recentFactor, double baselineFactor,
      DriftSettings s) {
    if (recent.measures().isBundle() && !baseline.measures().isBundle()) {
      return true;
    }
    double ratio = recent.measures().lift() / baseline.measures().lift();
    if (!(ratio >= s.enterLiftRatio() || ratio <= 1.0 / s.enterLiftRatio())) {
      return false;
    }
    double root = DriftStatistics.conservativeRootG2(recent.counts(), recentFactor, baseline.counts(), baselineFactor);
    return Math.abs(root) >= s.enterRootG2();
  }

  /** Whether this finding meets the entry condition of {@code kind}. */
  public boolean enters(AlertKind kind, DriftSettings s) {
    switch (kind) {
      case EMERGING:
        return signedRootG2 >= s.enterRootG2() && liftRatio >= s.enterLiftRatio();
      case FADING:
        return signedRootG2 <= -s.enterRootG2() && liftRatio <= 1.0 / s.enterLiftRatio();
      default:
        return recentBundle && !baselineBundle;
    }
  }

  /** Whether this finding meets the exit condition of {@code kind} (NaN evidence counts as gone). */
  public boolean exits(AlertKind kind, DriftSettings s) {
    switch (kind) {
      case EMERGING:
        return !(signedRootG2 >= s.exitRootG2() && liftRatio >= s.exitLiftRatio());
      case FADING:
        return !(signedRootG2 <= -s.exitRootG2() && liftRatio <= 1.0 / s.exitLiftRatio());
      default:
        return !(recentMinConfidence >= s.bundleExitConfidence());
    }
  }
}
