package org.pairpulse.ops.tools.drift;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.Detection;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/**
 * Scores raised alerts against the drift family's truth ({@link DriftPlant}s), stream by stream; {@link #combine}
 * adds streams up. The rules of {@link Detection} (the shift benchmark's), plus direction errors and bundle flaps.
 *
 * <h2>Planted changes (the n of "detected d/n")</h2>
 * An emerging plant's change is its start: the first {@code emerging} alert raised in [start, end) detects it. A
 * fading plant's change is its end: the first {@code fading} alert raised at or after the end detects it. Only changes
 * strictly inside the replay count. Delay: raise time − change time, in simulated minutes.
 *
 * <h2>Every raised emerging or fading alert is one of</h2>
 * <ul>
 *   <li>{@code detection}, {@code repeat}: the first, and any later, alert that matches a planted change as above;</li>
 *   <li>{@code direction_error}: an alert on a planted changing pair whose kind contradicts the truth at that time:
 *       {@code fading} on an emerging pair in [start, end) (rising or up), {@code emerging} on an emerging or fading
 *       pair at or after its end (it stopped);</li>
 *   <li>{@code expected}: true but not a planted change: {@code fading} on an emerging pair after its end (it returns
 *       to independence);</li>
 *   <li>{@code false}: anything else: alerts on any pair before its change, on the steady pairs and bundles, on any
 *       pair with the popularity-spike item, on the rare trap, on background pairs.</li>
 * </ul>
 * False alerts per simulated day: false alerts over the summed length of the streams in days (each stream stands
 * for one deployment, so the figure is per deployment-day, the unit of pairpulse's 0.5 target).
 *
 * <h2>Bundle alerts</h2>
 * A {@code bundle} alert is a flap when its pair was raised before in the same stream, or when the pair was planted
 * near-certain from the start of the run ({@link PlantedKind#BUNDLE} starting at or before the first basket: not
 * "new"). The first bundle alert of any other pair is not scored.
 *
 * @param changes the planted changes, stream by stream
 * @param alerts every raised alert with its class
 * @param simulatedDays the summed length of the streams in days
 */
public record DriftScore(List<Change> changes, List<ScoredAlert> alerts, double simulatedDays) {

  /** What a raised alert was. */
  public enum AlertClass {
    DETECTION, REPEAT, EXPECTED, DIRECTION_ERROR, FALSE, BUNDLE, BUNDLE_FLAP;

    public String wireName() {
      return name().toLowerCase(Locale.ROOT);
    }
  }

  /**
   * A planted change and its detection.
   *
   * @param stream the stream's name
   * @param plant the plant
   * @param raisedAtMillis when the detecting alert was raised, or null
   */
  public record Change(String stream, DriftPlant plant, Long raisedAtMillis) {
    public long changeMillis() {
      return plant.changeMillis();
    }

    public boolean detected() {
      return raisedAtMillis != null;
    }

    /** Delay in simulated minutes, NaN when not detected. */
    public double delayMinutes() {
      return raisedAtMillis == null ? Double.NaN : (raisedAtMillis - changeMillis()) / 60_000.0;
    }
  }

  /**
   * A raised alert with its class.
   *
   * @param stream the stream's name
   * @param alert the alert
   * @param alertClass its class
   * @param shape the shape of the plant it concerns, or null
   */
  public record ScoredAlert(String stream, AlertEvent alert, AlertClass alertClass, DriftShape shape) {}

  /** Scores the raised alerts among {@code alerts} of one stream replayed over [first, last]. */
  public static DriftScore score(String stream, List<DriftPlant> plants, List<AlertEvent> alerts, long firstEventMillis,
      long lastEventMillis) {
    List<Change> changes = new ArrayList<>();
    Map<DriftPlant, Integer> changeIndex = new HashMap<>();
    for (DriftPlant plant : plants) {
      if (plant.isChange() && plant.changeMillis() > firstEventMillis && plant.changeMillis() < lastEventMillis) {
        changeIndex.put(plant, changes.size());
        changes.add(new Change(stream, plant, null));
      }
    }
    Map<PairKey, Integer> bundleRaises = new HashMap<>();
    List<ScoredAlert> scored = new ArrayList<>();
    for (AlertEvent alert : alerts) {
      if (alert.transition() != AlertTransition.RAISED) {
        continue;
      }
      DriftPlant plant = plantOf(plants, alert.pair());
      AlertClass alertClass;
      if (alert.kind() == AlertKind.BUNDLE) {
        int before = bundleRaises.merge(alert.pair(), 1, Integer::sum) - 1;
        boolean steady = plant != null && plant.pair().kind() == PlantedKind.BUNDLE
            && plant.pair().startMillis() <= firstEventMillis;
        alertClass = before > 0 || steady ? AlertClass.BUNDLE_FLAP : AlertClass.BUNDLE;
      } else {
        alertClass = plant == null ? AlertClass.FALSE : classify(plant, alert, firstEventMillis);
        if (alertClass == AlertClass.DETECTION) {
          Integer index = changeIndex.get(plant);
          if (index != null && changes.get(index).raisedAtMillis() == null) {
            changes.set(index, new Change(stream, plant, alert.atMillis()));
          } else {
            alertClass = AlertClass.REPEAT;
          }
        }
      }
      scored.add(new ScoredAlert(stream, alert, alertClass, plant == null ? null : plant.shape()));
    }
    return new DriftScore(List.copyOf(changes), List.copyOf(scored),
        (lastEventMillis - firstEventMillis) / (double) BacktestSettings.DAY_MILLIS);
  }

  private static DriftPlant plantOf(List<DriftPlant> plants, PairKey pair) {
    for (DriftPlant plant : plants) {
      if (plant.concerns(pair)) {
        return plant;
      }
    }
    return null;
  }

  /** The class of an emerging or fading alert on a planted pair (DETECTION for a match, repeat or not). */
  private static AlertClass classify(DriftPlant plant, AlertEvent alert, long firstEventMillis) {
    PlantedPair pair = plant.pair();
    long at = alert.atMillis();
    boolean emerging = alert.kind() == AlertKind.EMERGING;
    if (pair.kind() == PlantedKind.EMERGING) {
      if (at < pair.startMillis()) {
        return AlertClass.FALSE;
      }
      if (at < pair.endMillis()) {
        return emerging ? AlertClass.DETECTION : AlertClass.DIRECTION_ERROR;
      }
      return emerging ? AlertClass.DIRECTION_ERROR : AlertClass.EXPECTED;
    }
    if (pair.kind() == PlantedKind.FADING) {
      if (at >= pair.endMillis()) {
        return emerging ? AlertClass.DIRECTION_ERROR : AlertClass.DETECTION;
      }
      return emerging && pair.startMillis() > firstEventMillis && at >= pair.startMillis() ? AlertClass.EXPECTED
          : AlertClass.FALSE;
    }
    return AlertClass.FALSE;
  }

  /** The scores of several streams as one. */
  public static DriftScore combine(List<DriftScore> scores) {
    List<Change> changes = new ArrayList<>();
    List<ScoredAlert> alerts = new ArrayList<>();
    double days = 0;
    for (DriftScore score : scores) {
      changes.addAll(score.changes);
      alerts.addAll(score.alerts);
      days += score.simulatedDays;
    }
    return new DriftScore(List.copyOf(changes), List.copyOf(alerts), days);
  }

  /** Planted changes detected. */
  public int detected() {
    return (int) changes.stream().filter(Change::detected).count();
  }

  /** Raised alerts of one class. */
  public long count(AlertClass alertClass) {
    return alerts.stream().filter(a -> a.alertClass() == alertClass).count();
  }

  public long directionErrors() {
    return count(AlertClass.DIRECTION_ERROR);
  }

  public long falseAlerts() {
    return count(AlertClass.FALSE);
  }

  public long bundleFlaps() {
    return count(AlertClass.BUNDLE_FLAP);
  }

  /** Direction errors on one plant of one stream. */
  public long directionErrors(String stream, DriftPlant plant) {
    return alerts.stream().filter(a -> a.alertClass() == AlertClass.DIRECTION_ERROR && a.stream().equals(stream)
        && plant.concerns(a.alert().pair())).count();
  }

  /** False alerts per simulated day; NaN without days. */
  public double falseAlertsPerSimulatedDay() {
    return simulatedDays > 0 ? falseAlerts() / simulatedDays : Double.NaN;
  }

  /** Median delay of the detected changes in simulated minutes; NaN if none. */
  public double medianDelayMinutes() {
    return median(changes.stream().filter(Change::detected).mapToDouble(Change::delayMinutes).toArray());
  }

  /** The change of the same stream and plant in {@code other}, or null. */
  public static Change find(List<Change> changes, Change change) {
    for (Change candidate : changes) {
      if (candidate.stream().equals(change.stream()) && candidate.plant().equals(change.plant())) {
        return candidate;
      }
    }
    return null;
  }

  /**
   * The median over changes detected by both of this score's delay / max(the reference's delay, {@code floorMinutes})
   * (the reference's own resolution, or the refresh interval: no detector reports sooner than its next refresh); NaN
   * when no change is detected by both.
   */
  public double medianDelayRatio(DriftScore reference, double floorMinutes) {
    List<Double> ratios = new ArrayList<>();
    for (Change change : changes) {
      Change other = find(reference.changes, change);
      if (change.detected() && other != null && other.detected()) {
        ratios.add(change.delayMinutes() / Math.max(other.delayMinutes(), floorMinutes));
      }
    }
    return median(ratios.stream().mapToDouble(Double::doubleValue).toArray());
  }

  /** The median (mean of the middle two for an even count); NaN for none. */
  public static double median(double[] values) {
    if (values.length == 0) {
      return Double.NaN;
    }
    double[] sorted = values.clone();
    java.util.Arrays.sort(sorted);
    int mid = sorted.length / 2;
    return sorted.length % 2 == 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
  }
}
