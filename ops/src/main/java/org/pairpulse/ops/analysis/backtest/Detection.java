package org.pairpulse.ops.analysis.backtest;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.floor.PairKey;

/**
 * Scores a replay's alerts against a scenario's ground truth.
 *
 * <h2>Planted events (the m of "detected k/m")</h2>
 * <ul>
 *   <li>an {@code EMERGING} pair's change is its start: an {@code emerging} alert raised in [start, end) detects
 *       it;</li>
 *   <li>a {@code FADING} pair's change is its end (the association stops): a {@code fading} alert raised at or
 *       after the end detects it.</li>
 * </ul>
 * Only changes inside the replay (after its first basket, before its last) count. The delay is the raise time
 * minus the change time, in simulated minutes; the first matching alert counts.
 *
 * <h2>Every raised alert is one of</h2>
 * <ul>
 *   <li>{@code detection}: the first alert that detects a planted event;</li>
 *   <li>{@code repeat}: a later alert of the same pair and kind inside the same event (after a resolution and
 *       the cooldown);</li>
 *   <li>{@code expected}: an alert that is true but not a planted change: a {@code fading} alert on an
 *       {@code EMERGING} pair after its end (it returns to independence), or a {@code bundle} alert on a planted
 *       {@code BUNDLE} pair;</li>
 *   <li>{@code false}: anything else: an {@code emerging} or {@code fading} alert on a pair that did not change
 *       then, including the steady planted pairs ({@code AFFINITY}, {@code BUNDLE}, {@code REPELLING}: strong,
 *       but not changing) and any pair with the flash-sale item ({@code NOISE_POPULARITY}); a {@code bundle}
 *       alert on a pair that is not a planted bundle.</li>
 * </ul>
 * False alerts per simulated day divide the false alerts by the replay's length in days.
 *
 * @param events one entry per planted event
 * @param alerts every raised alert with its class
 * @param simulatedDays the replay's length in days
 */
public record Detection(List<PlantedEvent> events, List<ClassifiedAlert> alerts, double simulatedDays) {

  /**
   * A planted change and whether it was detected.
   *
   * @param kind EMERGING or FADING
   * @param pair the pair
   * @param changeMillis the change time
   * @param raisedAtMillis when the detecting alert was raised, or null
   */
  public record PlantedEvent(PlantedKind kind, PairKey pair, long changeMillis, Long raisedAtMillis) {
    public boolean detected() {
      return raisedAtMillis != null;
    }

    /** Delay in simulated minutes, NaN when not detected. */
    public double delayMinutes() {
      return raisedAtMillis == null ? Double.NaN : (raisedAtMillis - changeMillis) / 60_000.0;
    }
  }

  /** What a raised alert was. */
  public enum AlertClass {
    DETECTION, REPEAT, EXPECTED, FALSE;

    public String wireName() {
      return name().toLowerCase(Locale.ROOT);
    }
  }

  /**
   * A raised alert and its class.
   *
   * @param alert the alert event
   * @param alertClass its class
   * @param planted the planted kind of its pair, or null when the pair is not planted
   */
  public record ClassifiedAlert(AlertEvent alert, AlertClass alertClass, PlantedKind planted) {}

  /** Scores {@code alerts} (all events of a replay) against {@code truth} for a replay over [first, last]. */
  public static Detection score(ScenarioGroundTruth truth, List<AlertEvent> alerts, long firstEventMillis,
      long lastEventMillis) {
    List<PlantedEvent> events = new ArrayList<>();
    List<PlantedPair> sources = new ArrayList<>();
    for (PlantedPair pair : truth.planted()) {
      if (pair.kind() != PlantedKind.EMERGING && pair.kind() != PlantedKind.FADING) {
        continue;
      }
      long change = pair.kind() == PlantedKind.EMERGING ? pair.startMillis() : pair.endMillis();
      if (change > firstEventMillis && change < lastEventMillis) {
        events.add(new PlantedEvent(pair.kind(), key(pair), change, null));
        sources.add(pair);
      }
    }
    List<ClassifiedAlert> classified = new ArrayList<>();
    for (AlertEvent alert : alerts) {
      if (alert.transition() != AlertTransition.RAISED) {
        continue;
      }
      PlantedPair planted = truth.find(alert.pair().first(), alert.pair().second()).orElse(null);
      AlertClass alertClass = AlertClass.FALSE;
      int matched = matchingEvent(events, sources, alert);
      if (matched >= 0) {
        PlantedEvent event = events.get(matched);
        if (event.raisedAtMillis() == null) {
          events.set(matched, new PlantedEvent(event.kind(), event.pair(), event.changeMillis(), alert.atMillis()));
          alertClass = AlertClass.DETECTION;
        } else {
          alertClass = AlertClass.REPEAT;
        }
      } else if (planted != null && isExpected(planted, alert)) {
        alertClass = AlertClass.EXPECTED;
      }
      classified.add(new ClassifiedAlert(alert, alertClass, planted == null ? null : planted.kind()));
    }
    return new Detection(List.copyOf(events), List.copyOf(classified),
        (lastEventMillis - firstEventMillis) / (double) BacktestSettings.DAY_MILLIS);
  }

  private static int matchingEvent(List<PlantedEvent> events, List<PlantedPair> sources, AlertEvent alert) {
    for (int i = 0; i < events.size(); i++) {
      PlantedEvent event = events.get(i);
      PlantedPair source = sources.get(i);
      if (!event.pair().equals(alert.pair())) {
        continue;
      }
      long at = alert.atMillis();
      if (event.kind() == PlantedKind.EMERGING && alert.kind() == AlertKind.EMERGING && source.covers(at)) {
        return i;
      }
      if (event.kind() == PlantedKind.FADING && alert.kind() == AlertKind.FADING && at >= event.changeMillis()) {
        return i;
      }
    }
    return -1;
  }

  private static boolean isExpected(PlantedPair planted, AlertEvent alert) {
    if (planted.kind() == PlantedKind.EMERGING && alert.kind() == AlertKind.FADING) {
      return alert.atMillis() >= planted.endMillis();
    }
    return planted.kind() == PlantedKind.BUNDLE && alert.kind() == AlertKind.BUNDLE;
  }

  private static PairKey key(PlantedPair pair) {
    return PairKey.of(pair.items().get(0), pair.items().get(1));
  }

  /** Planted events detected. */
  public int detected() {
    return (int) events.stream().filter(PlantedEvent::detected).count();
  }

  /** Median delay of the detected events in simulated minutes (mean of the middle two for an even count); NaN if none. */
  public double medianDelayMinutes() {
    double[] delays = events.stream().filter(PlantedEvent::detected).mapToDouble(PlantedEvent::delayMinutes).sorted()
        .toArray();
    if (delays.length == 0) {
      return Double.NaN;
    }
    int mid = delays.length / 2;
    return delays.length % 2 == 1 ? delays[mid] : (delays[mid - 1] + delays[mid]) / 2;
  }

  /** Raised alerts classed false. */
  public long falseAlerts() {
    return alerts.stream().filter(a -> a.alertClass() == AlertClass.FALSE).count();
  }

  /** False alerts per simulated day; NaN for an empty replay. */
  public double falseAlertsPerSimulatedDay() {
    return simulatedDays > 0 ? falseAlerts() / simulatedDays : Double.NaN;
  }

  /** The earliest change time of a planted event, or empty when none lies in the replay. */
  public java.util.OptionalLong firstChangeMillis() {
    return events.stream().mapToLong(PlantedEvent::changeMillis).min();
  }
}
