package org.pairpulse.ops.tools.bench;

import java.time.Duration;
import org.pairpulse.ops.analysis.backtest.DurationText;
import picocli.CommandLine.Option;

/**
 * {@code --refresh-every} of the benchmarks that replay simulated days through the backtest ({@code bench shift},
 * {@code bench drift}), as a picocli mixin, with the default both use.
 */
public final class DwellRefreshOption {
  /**
   * As fine as an alert's dwell (15 min), coarse enough for the default runs to finish in under 5 minutes here: a
   * refresh of the default engine costs about 0.15 s of CPU with 16,384 tracked pairs; {@code bench shift}'s 8
   * simulated days are 768 refreshes, {@code bench drift}'s 2 levels × 7 days 1,344 refreshes of about 0.13 s.
   */
  public static final Duration DEFAULT_REFRESH = Duration.ofMinutes(15);

  @Option(names = "--refresh-every", paramLabel = "DURATION", converter = DurationText.class,
      description = "Event time between refreshes; must divide a day (default: 15m).")
  Duration refreshEvery = DEFAULT_REFRESH;

  /** The interval asked for, in milliseconds. */
  public long millis() {
    return refreshEvery.toMillis();
  }
}
