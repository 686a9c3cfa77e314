package org.pairpulse.ops.tools.bench;

import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import picocli.CommandLine.Option;

/** The scenario options {@code bench shift} and {@code bench replay} share (a picocli mixin): rate and seed. */
final class ScenarioOptions {
  @Option(names = "--baskets-per-minute", paramLabel = "X", description = "Mean baskets per simulated minute"
      + " (default: ${DEFAULT-VALUE}).")
  double basketsPerMinute = ScenarioConfig.DEFAULT_BASKETS_PER_MINUTE;

  @Option(names = "--seed", paramLabel = "N", description = "Scenario seed (default: ${DEFAULT-VALUE}).")
  long seed = ScenarioConfig.DEFAULT_SEED;

  /** The scenario over {@code days} simulated days; an {@link IllegalArgumentException} names a value out of range. */
  ScenarioConfig scenario(int days) {
    return ScenarioConfig.defaults().withSeed(seed).withDurationDays(days).withBasketsPerMinute(basketsPerMinute);
  }
}
