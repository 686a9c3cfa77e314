package org.pairpulse.sketch.horizon;

import java.time.Duration;
import java.util.List;
import java.util.regex.Pattern;

/**
 * A named time weighting of counts.
 *
 * <ul>
 *   <li>{@link HorizonKind#WINDOW}: the last {@code lengthMillis} of event time, kept as
 *       {@code paneCount} panes of {@code lengthMillis / paneCount} each. The window's resolution is one
 *       pane: a query sees the panes that overlap the last {@code lengthMillis}, so it covers between
 *       {@code lengthMillis − paneMillis} and {@code lengthMillis} of history.</li>
 *   <li>{@link HorizonKind#DECAY}: every basket weighs {@code 2^(−age / halfLifeMillis)}.</li>
 * </ul>
 *
 * @param name a lower-case identifier ({@code [a-z][a-z0-9_-]{0,31}}), as the API and the dashboard show it
 * @param lengthMillis window length (0 for decay)
 * @param paneCount panes per window (1 for decay)
 * @param halfLifeMillis half-life (0 for windows)
 */
public record HorizonSpec(String name, HorizonKind kind, long lengthMillis, int paneCount, long halfLifeMillis) {
  private static final Pattern NAME = Pattern.compile("[a-z][a-z0-9_-]{0,31}");
  /** Most panes a window may have: each pane holds its own sketches and tracked counters. */
  public static final int MAX_PANES = 512;

  /** Default decay horizon: half-life 6 h. */
  public static final HorizonSpec RECENT = decay("recent", Duration.ofHours(6));
  /** Default short window: 24 h in 24 panes of one hour. */
  public static final HorizonSpec DAY = window("day", Duration.ofHours(24), 24);
  /** Default long window: 28 days in 28 panes of one day. */
  public static final HorizonSpec BASELINE = window("baseline", Duration.ofDays(28), 28);

  public HorizonSpec {
    if (name == null || !NAME.matcher(name).matches()) {
      throw new IllegalArgumentException("horizon name must match " + NAME.pattern() + ", got '" + name + "'");
    }
    if (kind == null) {
      throw new IllegalArgumentException("horizon '" + name + "' needs a kind");
    }
    if (kind == HorizonKind.WINDOW) {
      if (paneCount < 1 || paneCount > MAX_PANES) {
        throw new IllegalArgumentException("window '" + name + "': paneCount must be in 1.." + MAX_PANES + ", got " + paneCount);
      }
      if (lengthMillis < paneCount || lengthMillis % paneCount != 0) {
        throw new IllegalArgumentException("window '" + name + "': length " + lengthMillis
            + " ms must be a positive multiple of paneCount " + paneCount);
      }
      if (halfLifeMillis != 0) {
        throw new IllegalArgumentException("window '" + name + "' has no half-life");
      }
    } else {
      if (halfLifeMillis <= 0) {
        throw new IllegalArgumentException("decay '" + name + "': halfLifeMillis must be > 0, got " + halfLifeMillis);
      }
      if (paneCount != 1 || lengthMillis != 0) {
        throw new IllegalArgumentException("decay '" + name + "' has no panes and no length");
      }
    }
  }

  public static HorizonSpec window(String name, Duration length, int paneCount) {
    return new HorizonSpec(name, HorizonKind.WINDOW, length.toMillis(), paneCount, 0);
  }

  public static HorizonSpec decay(String name, Duration halfLife) {
    return new HorizonSpec(name, HorizonKind.DECAY, 0, 1, halfLife.toMillis());
  }

  /** The default horizons: {@code recent}, {@code day}, {@code baseline}. */
  public static List<HorizonSpec> defaults() {
    return List.of(RECENT, DAY, BASELINE);
  }

  /** Length of one pane (windows), or 0 for decay. */
  public long paneMillis() {
    return kind == HorizonKind.WINDOW ? lengthMillis / paneCount : 0;
  }

  /** λ = ln 2 / half-life, per millisecond (decay only). */
  public double lambdaPerMilli() {
    return kind == HorizonKind.DECAY ? Math.log(2) / halfLifeMillis : 0;
  }

  public boolean isWindow() {
    return kind == HorizonKind.WINDOW;
  }

  /** A short human description, e.g. "window 24h in 24 panes" or "decay half-life 6h". */
  public String describe() {
    return isWindow()
        ? "window " + Duration.ofMillis(lengthMillis) + " in " + paneCount + " panes of " + Duration.ofMillis(paneMillis())
        : "decay half-life " + Duration.ofMillis(halfLifeMillis);
  }
}
