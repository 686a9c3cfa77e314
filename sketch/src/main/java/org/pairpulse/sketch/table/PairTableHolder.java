package org.pairpulse.sketch.table;

import java.util.Objects;
import java.util.concurrent.atomic.AtomicReference;

/**
 * Holds the current pair table: the writer publishes, readers read without locks. A table with a
 * version not newer than the current one is refused, so a slow refresh never replaces a newer table.
 */
public final class PairTableHolder implements PairTableSource {
  private final AtomicReference<PairTable> current = new AtomicReference<>(PairTable.empty());

  @Override
  public PairTable current() {
    return current.get();
  }

  /** Publishes {@code table}; returns false (and keeps the current one) if it is not newer. */
  public boolean publish(PairTable table) {
    Objects.requireNonNull(table, "table");
    while (true) {
      PairTable now = current.get();
      if (table.version() <= now.version()) {
        return false;
      }
      if (current.compareAndSet(now, table)) {
        return true;
      }
    }
  }
}
