package org.pairpulse.ops.analysis.report;

/**
 * One row of the offer shortlist: a rule {@code itemA ⇒ itemB} and its evidence.
 *
 * <p>In the {@code suggestion} list the rule is the one whose confidence lies in the band. In the {@code emerging}
 * list the pair is unordered and the rule is its direction of higher confidence in {@code recent}.
 *
 * @param list {@code emerging} or {@code suggestion}
 * @param rank 1-based rank within its list and segment
 * @param itemA the antecedent (the item in the basket)
 * @param itemB the consequent (the item to offer)
 * @param horizon the horizon of the statistics below
 * @param pairBaskets n_ab in that horizon (decayed units in a decay horizon)
 * @param support n_ab / N
 * @param confidence n_ab / n_a of the rule
 * @param lift the lift
 * @param liftLower lower end of the lift interval
 * @param liftUpper upper end of the lift interval (may be +∞)
 * @param recentLift lift in {@code recent} (NaN when not published there)
 * @param baselineLift lift in {@code baseline} (NaN when not published there)
 * @param signedRootG2 the drift finding's strength, signed √G² of its stronger test (NaN when not compared)
 * @param change what moved for an emerging row ({@code rate}, {@code association} or {@code both}); empty otherwise
 * @param evidence the emerging row's evidence in plain words (serve's {@code DriftWords}); empty otherwise
 */
public record ShortlistRow(String list, int rank, String itemA, String itemB, String horizon, double pairBaskets,
    double support, double confidence, double lift, double liftLower, double liftUpper, double recentLift,
    double baselineLift, double signedRootG2, String change, String evidence) {

  public static final String EMERGING = "emerging";
  public static final String SUGGESTION = "suggestion";

  /** recent lift / baseline lift, NaN when either is missing. */
  public double liftRatio() {
    return recentLift / baselineLift;
  }
}
