package org.pairpulse.ops.analysis.report;

import java.util.Objects;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.suggest.SuggestionRequest;

/**
 * What the offer shortlist lists.
 *
 * <table>
 *   <caption>Settings</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>minConfidence / maxConfidence</td><td>0.30 / 0.60</td><td>the confidence band of suggestion pairs
 *       (serve's default: a common-practice rule of thumb, a starting point to tune; serve's README, "The confidence
 *       band")</td></tr>
 *   <tr><td>top</td><td>20</td><td>rows per list and segment</td></tr>
 *   <tr><td>horizon</td><td>day</td><td>the horizon of the suggestion pairs (the last 24 h)</td></tr>
 *   <tr><td>drift</td><td>serve's defaults</td><td>emerging pairs: those meeting the entry condition of an emerging
 *       alert (recent against baseline) at the report's time</td></tr>
 *   <tr><td>cohortFloor</td><td>50</td><td>distinct baskets behind every number shown; rows under it are counted,
 *       never shown</td></tr>
 * </table>
 *
 * @param minConfidence lower end of the band
 * @param maxConfidence upper end of the band
 * @param top rows per list and segment
 * @param horizon the suggestion pairs' horizon
 * @param drift the emerging test
 * @param cohortFloor the cohort floor in distinct baskets
 */
public record ShortlistSettings(double minConfidence, double maxConfidence, int top, String horizon, DriftSettings drift,
    double cohortFloor) {

  public ShortlistSettings {
    Objects.requireNonNull(horizon, "horizon");
    Objects.requireNonNull(drift, "drift");
    if (!(minConfidence >= 0 && minConfidence <= maxConfidence && maxConfidence <= 1)) {
      throw new IllegalArgumentException("need 0 <= min confidence <= max confidence <= 1, got " + minConfidence + ", "
          + maxConfidence);
    }
    if (top < 1 || top > 10_000) {
      throw new IllegalArgumentException("top must be in 1..10000, got " + top);
    }
    if (!(cohortFloor >= 0) || Double.isInfinite(cohortFloor)) {
      throw new IllegalArgumentException("cohort floor must be finite and >= 0, got " + cohortFloor);
    }
  }

  public static ShortlistSettings defaults() {
    return new ShortlistSettings(SuggestionRequest.DEFAULT_MIN_CONFIDENCE, SuggestionRequest.DEFAULT_MAX_CONFIDENCE, 20, "day",
        DriftSettings.defaults(), CohortFloor.DEFAULT_MIN_BASKETS);
  }

  public ShortlistSettings withBand(double min, double max) {
    return new ShortlistSettings(min, max, top, horizon, drift, cohortFloor);
  }

  public ShortlistSettings withTop(int value) {
    return new ShortlistSettings(minConfidence, maxConfidence, value, horizon, drift, cohortFloor);
  }

  public ShortlistSettings withHorizon(String value) {
    return new ShortlistSettings(minConfidence, maxConfidence, top, value, drift, cohortFloor);
  }

  public ShortlistSettings withDrift(DriftSettings value) {
    return new ShortlistSettings(minConfidence, maxConfidence, top, horizon, value, cohortFloor);
  }

  public ShortlistSettings withCohortFloor(double value) {
    return new ShortlistSettings(minConfidence, maxConfidence, top, horizon, drift, value);
  }
}
