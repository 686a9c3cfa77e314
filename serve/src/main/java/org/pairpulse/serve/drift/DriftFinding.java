package org.pairpulse.serve.drift;

import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.sketch.stats.PairCounts;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * One pair's comparison of the recent period against the reference period at one table version:
 * the evidence an emerging, fading or new-bundle alert carries. The two tests of {@link
 * DriftStatistics} are kept apart: (a) the rate per basket, (b) the association (odds ratio).
 *
 * <h2>Entry conditions (z = enterRootG2, R = enterRatio, z′ = exitRootG2)</h2>
 * <ul>
 *   <li><b>emerging</b>, with the {@link DriftChange} it reports:
 *     <ul>
 *       <li>{@code both}: rate root ≥ z and association root ≥ z, rate ratio ≥ R and odds-ratio ratio ≥ R;</li>
 *       <li>{@code association}: association root ≥ z, odds-ratio ratio ≥ R, rate root &gt; −z′ (the rate does
 *           not fall);</li>
 *       <li>{@code rate}: rate root ≥ z, rate ratio ≥ R, association root &gt; −z′, the association <em>not
 *           shown unchanged</em> ({@link DriftStatistics#associationShownUnchanged}: ln of the odds-ratio ratio ± one
 *           standard error inside ±ln R), and the pair's association now significant at the drift level (its
 *           size-adjusted signed √G² ≥ z).</li>
 *     </ul>
 *     Every route also needs the pair associated now: its lift interval's lower end above 1 under the size-adjusted
 *     null model (the pair table's default). The odds ratio is a textbook 2×2 measure and moves with basket size:
 *     when an item's popularity spikes in larger baskets, its pairs' odds ratios rise with it, while their
 *     size-adjusted lift stays at 1.</li>
 *   <li><b>fading</b>: the mirror image (roots ≤ −z, ratios ≤ 1/R), the pair associated in the reference
 *       period.</li>
 *   <li><b>bundle</b>: a bundle pair now (both confidences ≥ the table's bundle threshold) whose smaller
 *       confidence in the reference period was below {@code bundleExitConfidence}: it was clearly not
 *       near-certain before, so a steady near-certain pair never enters.</li>
 * </ul>
 * A move of one item's popularity alone moves the rate but not the association; on a pair with enough
 * evidence the association is then shown unchanged and nothing enters, and on a pair without association
 * now (beyond basket size) no route is open. The direction of an alert never contradicts either test: emerging
 * needs neither root significantly negative, fading neither significantly positive.
 *
 * <h2>Exit conditions</h2>
 * An active emerging alert clears when neither root stays ≥ z′ with its ratio ≥ exitRatio (fading: the
 * mirror); a bundle alert clears when the smaller recent confidence falls below {@code bundleExitConfidence}.
 *
 * @param pair the pair
 * @param signedRootG2 the stronger of the two roots (rate or association): the finding's strength
 * @param pValue its two-sided p-value
 * @param rateRootG2 signed √G² of the rate test (positive: the pair is bought together more often per basket)
 * @param associationRootG2 signed √G² of the association test (positive: the odds ratio rose)
 * @param rateRatio rate per basket now / in the reference period (point values; +∞ from nothing)
 * @param oddsRatioRatio odds ratio now / in the reference period (0.5 added to every cell)
 * @param associationUnchanged whether the association is shown unchanged within enterRatio (see above)
 * @param recentLift lift now
 * @param baselineLift lift in the reference period
 * @param liftRatio lift now / in the reference period (for people: lift moves with the margins)
 * @param recentPairBaskets n_ab now (the recent horizon's units)
 * @param baselinePairBaskets n_ab in the reference period (its units)
 * @param recentBaskets N now
 * @param referenceBaskets N in the reference period
 * @param recentLiftLower the lower bound of the recent lift interval
 * @param referenceLiftLower the lower bound of the reference lift interval
 * @param recentAssociationRoot signed √G² of the pair's association now (size-adjusted null model, effective counts)
 * @param referenceAssociationRoot the same in the reference period
 * @param recentMinConfidence the smaller of the two confidences now
 * @param referenceMinConfidence the smaller of the two confidences in the reference period
 * @param recentBundle whether the pair is a bundle pair now
 * @param baselineBundle whether it is one in the reference period
 * @param trackedSinceMillis event time at which the pair entered the tracked table
 * @param recentHalfLifeMillis the half-life of the recent period the two tests read: the table's recent decay, or
 *     the monitor's shorter scale ({@link ShortScale}); 0 when the recent period is a window
 */
public record DriftFinding(PairKey pair, double signedRootG2, double pValue, double rateRootG2,
    double associationRootG2, double rateRatio, double oddsRatioRatio, boolean associationUnchanged, double recentLift,
    double baselineLift, double liftRatio, double recentPairBaskets, double baselinePairBaskets, double recentBaskets,
    double referenceBaskets, double recentLiftLower, double referenceLiftLower, double recentAssociationRoot,
    double referenceAssociationRoot, double recentMinConfidence,
    double referenceMinConfidence, boolean recentBundle, boolean baselineBundle, long trackedSinceMillis,
    long recentHalfLifeMillis) {

  /**
   * Width, in standard errors, of the odds-ratio-ratio interval that shows an association unchanged (the
   * {@code rate} route's gate against popularity moves): one standard error, so that the gate closes on
   * pairs with moderate evidence too; a change whose reference odds ratio is unknown (a pair from nothing,
   * an item bought only with the pair) has an interval far wider than that and passes.
   */
  static final double UNCHANGED_STANDARD_ERRORS = 1.0;

  /**
   * The finding for one pair from its statistics in the two periods; {@code recentFactor} and
   * {@code referenceFactor} turn each period's counts into effective counts
   * ({@link DriftStatistics#effectiveCountFactor}).
   */
  public static DriftFinding of(PairStats recent, PairStats reference, double recentFactor, double referenceFactor,
      DriftSettings settings) {
    return of(recent, reference, reference.counts(), recentFactor, referenceFactor, settings);
  }

  /**
   * The finding with the reference period's counts given apart ({@code referenceCounts}, e.g. the reference decay
   * less the recent one: {@link DriftStatistics#excluding}); the tests read them, while the reference's lift and
   * its interval come from {@code reference}'s own measures (size-adjusted, as the table published them).
   */
  public static DriftFinding of(PairStats recent, PairStats reference, PairCounts referenceCounts, double recentFactor,
      double referenceFactor, DriftSettings settings) {
    return of(recent, recent.counts(), 0L, reference, referenceCounts, recentFactor, referenceFactor, settings);
  }

  /**
   * The finding with both periods' counts given apart: the tests read {@code recentCounts} (e.g. the monitor's short
   * scale, of half-life {@code recentHalfLifeMillis}) and {@code referenceCounts}; the lifts, their intervals, the
   * association now and the confidences come from {@code recent}'s and {@code reference}'s own measures
   * (size-adjusted, as the table published them), so the gate "associated beyond basket size" reads the table.
   */
  public static DriftFinding of(PairStats recent, PairCounts recentCounts, long recentHalfLifeMillis,
      PairStats reference, PairCounts referenceCounts, double recentFactor, double referenceFactor,
      DriftSettings settings) {
    PairMeasures r = recent.measures();
    PairMeasures b = reference.measures();
    PairCounts rc = recentCounts;
    PairCounts bc = referenceCounts;
    double rateRoot = DriftStatistics.rateRootG2(rc, recentFactor, bc, referenceFactor);
    double associationRoot = DriftStatistics.associationRootG2(rc, recentFactor, bc, referenceFactor);
    double strongest = !(Math.abs(associationRoot) > Math.abs(rateRoot)) ? rateRoot : associationRoot;
    double rateRatio = (rc.countAB().value() / rc.baskets()) / (bc.countAB().value() / bc.baskets());
    double oddsRatioRatio = Math.exp(DriftStatistics.logOddsRatioRatio(rc, recentFactor, bc, referenceFactor));
    boolean unchanged = DriftStatistics.associationShownUnchanged(rc, recentFactor, bc, referenceFactor,
        UNCHANGED_STANDARD_ERRORS, settings.enterRatio());
    return new DriftFinding(PairKey.of(recent.itemA(), recent.itemB()), strongest, DriftStatistics.pValue(strongest),
        rateRoot, associationRoot, rateRatio, oddsRatioRatio, unchanged, r.lift(), b.lift(), r.lift() / b.lift(),
        rc.countAB().value(), bc.countAB().value(), rc.baskets(), bc.baskets(), r.liftLower(), b.liftLower(),
        r.signedRootGSquared() * Math.sqrt(recentFactor), b.signedRootGSquared() * Math.sqrt(referenceFactor),
        Math.min(r.confidenceAB(), r.confidenceBA()), minConfidence(bc), r.isBundle(),
        b.isBundle(), recent.trackedSinceMillis(), recentHalfLifeMillis);
  }

  /** min(n_ab/n_a, n_ab/n_b) from point values; 0 without items. */
  private static double minConfidence(PairCounts counts) {
    double most = Math.max(counts.countA().value(), counts.countB().value());
    return most > 0 ? Math.min(1.0, counts.countAB().value() / most) : 0.0;
  }

  /**
   * Whether a pair could meet any entry condition: a cheap test on its statistics (the rate test and the
   * effect sizes, no fitting), so the monitor builds findings only for the few pairs that pass it.
   */
  static boolean mayEnter(PairCounts recent, PairCounts reference, double recentFactor, double referenceFactor,
      DriftSettings s) {
    double ab = recent.countAB().value();
    double mostA = Math.max(recent.countA().value(), recent.countB().value());
    if (ab >= MeasureSettings.defaults().bundleConfidence() * mostA) {
      double referenceAB = reference.countAB().value();
      double referenceMax = Math.max(reference.countA().value(), reference.countB().value());
      return !(referenceAB >= s.bundleExitConfidence() * referenceMax);
    }
    double rate = DriftStatistics.rateRootG2(recent, recentFactor, reference, referenceFactor);
    if (Math.abs(rate) >= s.enterRootG2()) {
      return true;
    }
    double logRatio = DriftStatistics.logOddsRatioRatio(recent, recentFactor, reference, referenceFactor);
    return Math.abs(logRatio) >= Math.log(s.enterRatio());
  }

  /** The change an emerging alert would report, or null when emerging does not enter. */
  public DriftChange emergingChange(DriftSettings s) {
    return change(s, 1.0);
  }

  /** The change a fading alert would report, or null when fading does not enter. */
  public DriftChange fadingChange(DriftSettings s) {
    return change(s, -1.0);
  }

  /** The entry routes of the class comment; {@code sign} +1 for emerging, −1 for fading. */
  private DriftChange change(DriftSettings s, double sign) {
    double rate = sign * rateRootG2;
    double association = sign * associationRootG2;
    double rateEffect = sign > 0 ? rateRatio : 1.0 / rateRatio;
    double oddsEffect = sign > 0 ? oddsRatioRatio : 1.0 / oddsRatioRatio;
    // the side where the pair must be associated (beyond basket size): now for emerging, before for fading
    if (!((sign > 0 ? recentLiftLower : referenceLiftLower) > 1.0)) {
      return null;
    }
    boolean rateMoved = rate >= s.enterRootG2() && rateEffect >= s.enterRatio();
    boolean associationMoved = association >= s.enterRootG2() && oddsEffect >= s.enterRatio();
    if (rateMoved && associationMoved) {
      return DriftChange.BOTH;
    }
    if (associationMoved && rate > -s.exitRootG2()) {
      return DriftChange.ASSOCIATION;
    }
    // the rate route has no test of a change of association: it needs the association itself (now for emerging,
    // before for fading) at the drift level, not at a single interval's 95 %; an item whose popularity jumps has
    // hundreds of pairs, and some of them sit just above lift 1 by chance
    double associated = sign > 0 ? recentAssociationRoot : referenceAssociationRoot;
    if (rateMoved && association > -s.exitRootG2() && !associationUnchanged && associated >= s.enterRootG2()) {
      return DriftChange.RATE;
    }
    return null;
  }

  /** Whether this finding meets the entry condition of {@code kind}. */
  public boolean enters(AlertKind kind, DriftSettings s) {
    switch (kind) {
      case EMERGING:
        return emergingChange(s) != null;
      case FADING:
        return fadingChange(s) != null;
      default:
        return recentBundle && referenceMinConfidence < s.bundleExitConfidence();
    }
  }

  /** Whether this finding meets the exit condition of {@code kind} (NaN evidence counts as gone). */
  public boolean exits(AlertKind kind, DriftSettings s) {
    switch (kind) {
      case EMERGING:
        return !(rateRootG2 >= s.exitRootG2() && rateRatio >= s.exitRatio()
            || associationRootG2 >= s.exitRootG2() && oddsRatioRatio >= s.exitRatio());
      case FADING:
        return !(rateRootG2 <= -s.exitRootG2() && rateRatio <= 1.0 / s.exitRatio()
            || associationRootG2 <= -s.exitRootG2() && oddsRatioRatio <= 1.0 / s.exitRatio());
      default:
        return !(recentMinConfidence >= s.bundleExitConfidence());
    }
  }

  /** The change this finding shows for {@code kind}, or null (bundle alerts and findings that do not enter). */
  public DriftChange changeFor(AlertKind kind, DriftSettings s) {
    return kind == AlertKind.EMERGING ? emergingChange(s) : kind == AlertKind.FADING ? fadingChange(s) : null;
  }
}
