package org.pairpulse.serve.drift;

import java.util.List;

/**
 * Emerging, fading and new-bundle pairs of one segment at one table version.
 *
 * @param segment the segment
 * @param tableVersion the version observed (0 before any)
 * @param atMillis the alert clock's time of the observation
 * @param pairsCompared pairs published in both horizons
 * @param emerging strongest first (by signed √G²)
 * @param fading strongest first (by −signed √G²)
 * @param bundles most evidence first (by recent n_ab)
 */
public record DriftReport(String segment, long tableVersion, long atMillis, int pairsCompared, List<DriftEntry> emerging,
    List<DriftEntry> fading, List<DriftEntry> bundles) {

  public DriftReport {
    emerging = List.copyOf(emerging);
    fading = List.copyOf(fading);
    bundles = List.copyOf(bundles);
  }

  /** The report before any observation. */
  public static DriftReport empty(String segment) {
    return new DriftReport(segment, 0, 0, 0, List.of(), List.of(), List.of());
  }

  public List<DriftEntry> of(AlertKind kind) {
    switch (kind) {
      case EMERGING:
        return emerging;
      case FADING:
        return fading;
      default:
        return bundles;
    }
  }
}
