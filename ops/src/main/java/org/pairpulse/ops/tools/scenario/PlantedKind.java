package org.pairpulse.ops.tools.scenario;

/** What a planted pair of the scenario is, hence what a detector should say about it. */
public enum PlantedKind {
  /** A pair that starts selling together at its start time: alert as emerging soon after the start. */
  EMERGING,
  /** A pair whose association ends at its end time (lift back to 1): alert as fading soon after the end. */
  FADING,
  /** A pair bought together almost always (confidence ≥ 0.95 both ways): true, never a suggestion. */
  BUNDLE,
  /** A pair well below independence over the whole run. */
  REPELLING,
  /** One item whose popularity jumps while all its pairs stay at lift 1: no pair alert expected. */
  NOISE_POPULARITY,
  /**
   * A steady true affinity over the whole run (e.g. a handset and its screen guard): strong lift, but
   * neither emerging nor fading; listed so that an evaluation does not count it as a false discovery.
   */
  AFFINITY,
  /**
   * Two rare items bought together a handful of times within a few hours (a coincidence, not a change): no pair
   * alert expected; a detector must not read a few co-occurrences of items that are hardly ever sold as evidence.
   * Planted by the drift family ({@code org.pairpulse.ops.tools.drift}).
   */
  RARE_TRAP
}
