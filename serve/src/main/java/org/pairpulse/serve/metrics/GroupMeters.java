package org.pairpulse.serve.metrics;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import java.util.List;
import org.pairpulse.serve.GroupStatus;

/** The group's coverage and alert-leadership gauges (group mode only). */
public final class GroupMeters {
  private GroupMeters() {}

  /** Registers the gauges when {@code group} reports coverage or {@code leadership} is on; else nothing. */
  public static void register(MeterRegistry registry, GroupStatus group, boolean leadership) {
    if (group.coverage().isEmpty() && !leadership) {
      return;
    }
    for (String state : List.of("live", "remote", "empty", "missing", "stale")) {
      Gauge.builder("pairpulse.group.partitions", group, g -> g.coverage().map(c -> switch (state) {
        case "live" -> c.live();
        case "remote" -> c.remote();
        case "empty" -> c.empty();
        case "missing" -> c.missing().size();
        default -> c.stale().size();
      }).orElse(0).doubleValue()).tag("state", state)
          .description("Input partitions of the group by how the served table holds them").register(registry);
    }
    Gauge.builder("pairpulse.group.contribution.age", group,
        g -> g.coverage().map(c -> c.oldestContributionAgeMillis() / 1000.0).orElse(0.0)).baseUnit("seconds")
        .description("Age of the oldest merged partition state that lags its records").register(registry);
    Gauge.builder("pairpulse.group.partial", group, g -> g.coverage().map(c -> c.partial() ? 1.0 : 0.0).orElse(0.0))
        .description("1 when a partition's state is missing from the served table or stale").register(registry);
    Gauge.builder("pairpulse.group.alert.leader", group, g -> g.alertLeader() ? 1.0 : 0.0)
        .description("1 on the instance that raises the group's alerts").register(registry);
  }
}
