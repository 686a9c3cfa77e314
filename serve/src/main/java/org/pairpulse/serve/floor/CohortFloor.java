package org.pairpulse.serve.floor;

import java.util.List;
import java.util.Objects;
import java.util.Optional;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * The cohort floor: the minimum number of distinct baskets behind any statistic serve publishes
 * (API, dashboard, alerts). A privacy guard: a pair bought together by a handful of people says
 * something about those people, so it is not shown at all.
 *
 * <h2>Rule</h2>
 * The evidence of a statistic is a number of distinct baskets, taken as a <em>lower bound</em>
 * (sketches overcount, so the point value could hide a smaller true count):
 * <ul>
 *   <li>in a window horizon, the lower bound of the count in that window (n_ab for a pair, n_a
 *       for an item, N for the horizon);</li>
 *   <li>in a decay horizon, whose weighted counts are not basket counts, the lower bound of the
 *       same count in the <em>evidence horizon</em>: the longest window horizon. With no window
 *       horizon at all the decayed lower bound itself is used; a decayed count never exceeds the
 *       number of distinct baskets behind it, so this errs on the side of suppression.</li>
 * </ul>
 * A pair is published in a horizon only if its n_ab and both items' n_a pass; an item only if
 * its n_a passes; a horizon's N only if it passes. {@code minBaskets = 0} publishes everything.
 *
 * @param minBaskets the floor in distinct baskets, {@code >= 0}; default {@value #DEFAULT_MIN_BASKETS}
 * @param horizons the engine's horizons (their kinds say which are windows); a horizon of a table
 *     that is not listed here is treated as a decay
 */
public record CohortFloor(double minBaskets, List<HorizonSpec> horizons) {

  /** Default floor in distinct baskets. */
  public static final double DEFAULT_MIN_BASKETS = 50;

  public CohortFloor {
    if (!(minBaskets >= 0) || Double.isInfinite(minBaskets)) {
      throw new IllegalArgumentException("cohort floor must be finite and >= 0, got " + minBaskets);
    }
    horizons = List.copyOf(Objects.requireNonNull(horizons, "horizons"));
  }

  /** The default floor over the default horizons. */
  public static CohortFloor defaults() {
    return new CohortFloor(DEFAULT_MIN_BASKETS, HorizonSpec.defaults());
  }

  /** A floor of {@code minBaskets} over the default horizons. */
  public static CohortFloor of(double minBaskets) {
    return new CohortFloor(minBaskets, HorizonSpec.defaults());
  }

  /** No floor: everything is published (for offline evaluation, never for a public endpoint). */
  public static CohortFloor none() {
    return of(0);
  }

  /** The spec of a horizon, if known. */
  public Optional<HorizonSpec> spec(String horizon) {
    return horizons.stream().filter(h -> h.name().equals(horizon)).findFirst();
  }

  /** True when {@code horizon} is a known window horizon. */
  public boolean isWindow(String horizon) {
    return spec(horizon).map(HorizonSpec::isWindow).orElse(false);
  }

  /** Whether {@code basketsLowerBound} distinct baskets are enough evidence. */
  public boolean passes(double basketsLowerBound) {
    return basketsLowerBound >= minBaskets;
  }
}
