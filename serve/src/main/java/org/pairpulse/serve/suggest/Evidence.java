package org.pairpulse.serve.suggest;

/**
 * One basket item's evidence for a suggestion: the statistics of the pair {basket item, suggested
 * item} in the request's horizon, read as the rule basket item ⇒ suggested item.
 *
 * @param basketItem the basket item (the rule's antecedent)
 * @param horizon the horizon the statistics come from
 * @param measure the wire name of the scoring measure
 * @param measureValue the measure's value for this rule (directed measures in this direction)
 * @param contribution what this pair adds to the suggestion's score (see {@link Suggester})
 * @param inBand whether the rule's confidence is inside the request's band and its support at or
 *     above the request's floor (only such pairs make an item eligible)
 * @param lift N·n_ab / (n_a·n_b)
 * @param liftLower lower end of the lift interval (sketch and sampling error)
 * @param liftUpper upper end of the lift interval (may be +∞, written as null on the wire)
 * @param shrunkLift lift pulled toward 1 when evidence is thin
 * @param confidence n_ab / n_basketItem
 * @param support n_ab / N
 * @param pairBaskets n_ab (weighted; decayed units in a decay horizon)
 */
public record Evidence(String basketItem, String horizon, String measure, double measureValue, double contribution,
    boolean inBand, double lift, double liftLower, double liftUpper, double shrunkLift, double confidence,
    double support, double pairBaskets) {}
