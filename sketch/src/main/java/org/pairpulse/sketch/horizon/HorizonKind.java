package org.pairpulse.sketch.horizon;

/** The two ways a horizon weights time. */
public enum HorizonKind {
  /** A hard sliding window kept as a ring of panes; a pane leaves the window whole. */
  WINDOW,
  /** Exponential decay with a half-life, kept by forward decay (Cormode et al. 2009). */
  DECAY
}
