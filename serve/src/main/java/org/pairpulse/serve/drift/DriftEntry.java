package org.pairpulse.serve.drift;

/**
 * One pair in a drift report.
 *
 * @param kind emerging, fading or bundle
 * @param state the alert state: pending (condition holds, dwell not over), active (alert raised),
 *     clearing (alert raised, its end holds, dwell not over) or cooldown (resolved, quiet)
 * @param sinceMillis when the condition began to hold
 * @param raisedAtMillis when the alert was raised, or null if it was not
 * @param finding the newest evidence
 * @param change what the newest evidence shows as changed for this kind (null for a bundle, or when the entry
 *     condition no longer holds)
 * @param summary the newest evidence in plain words ({@link DriftWords})
 */
public record DriftEntry(AlertKind kind, AlertMachine.State state, long sinceMillis, Long raisedAtMillis,
    DriftFinding finding, DriftChange change, String summary) {}
