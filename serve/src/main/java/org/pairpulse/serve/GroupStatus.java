package org.pairpulse.serve;

import java.util.List;
import java.util.Optional;

/**
 * The consumer group as one instance serves it (group mode): which partitions the served table holds, and whether
 * this instance raises the group's alerts. Shown in {@code /api/v1/status} ({@code group}), {@code /metrics}
 * ({@code pairpulse_group_*}) and the dashboard header.
 */
@FunctionalInterface
public interface GroupStatus {
  /** The coverage of the served table, or empty when the instance serves only its own partitions. Must not block. */
  Optional<Coverage> coverage();

  /** True while this instance raises the group's alerts (the alert leader). */
  default boolean alertLeader() {
    return true;
  }

  /**
   * @param partitions input partitions of the group
   * @param live partitions counted by this instance
   * @param remote partitions merged from their owners' newest checkpoints
   * @param empty partitions without a record (nothing to merge)
   * @param missing partitions with records whose state is not in the table
   * @param stale remote partitions whose checkpoint lags their records beyond the staleness bound
   * @param oldestContributionAgeMillis the largest age of a contribution that lags its partition's records (0: none)
   */
  record Coverage(int partitions, int live, int remote, int empty, List<String> missing, List<String> stale,
      long oldestContributionAgeMillis) {
    public Coverage {
      missing = List.copyOf(missing);
      stale = List.copyOf(stale);
    }

    /** Partitions whose state the table holds (stale ones included). */
    public int merged() {
      return live + remote + empty;
    }

    /** A partition's state is missing or stale: the table is not the whole group's. */
    public boolean partial() {
      return !missing.isEmpty() || !stale.isEmpty();
    }
  }

  /** Not in group mode: the instance serves its own partitions and raises its own alerts. */
  static GroupStatus none() {
    return Optional::empty;
  }
}
