package org.pairpulse.sketch.table;

/**
 * Where readers (the HTTP layer, reports) get the current pair table. Implementations publish tables
 * through a safe reference; {@link #current()} never blocks and never returns null.
 */
@FunctionalInterface
public interface PairTableSource {
  /** The newest published pair table ({@link PairTable#empty()} before the first refresh). */
  PairTable current();
}
