package org.pairpulse.serve.drift;

import java.util.Locale;

/** What an alert is about; {@link #wireName()} is the stable lower-case name on the wire. */
public enum AlertKind {
  /** The pair's association in {@code recent} is significantly stronger than in {@code baseline}. */
  EMERGING,
  /** The pair's association in {@code recent} is significantly weaker than in {@code baseline}. */
  FADING,
  /** The pair became a bundle pair in {@code recent} while it is not one in {@code baseline}. */
  BUNDLE;

  public String wireName() {
    return name().toLowerCase(Locale.ROOT);
  }
}
