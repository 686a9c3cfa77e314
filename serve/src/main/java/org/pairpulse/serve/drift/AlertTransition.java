package org.pairpulse.serve.drift;

import java.util.Locale;

/** An alert's two public events. */
public enum AlertTransition {
  /** The condition held for the minimum dwell: the alert starts. */
  RAISED,
  /** The condition's end held for the minimum dwell: the alert ends and the cooldown starts. */
  RESOLVED;

  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }
}
