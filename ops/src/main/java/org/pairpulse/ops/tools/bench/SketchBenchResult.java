package org.pairpulse.ops.tools.bench;

import java.util.Locale;
import java.util.regex.Pattern;
import org.pairpulse.sketch.fixtures.ExactCounts;

/**
 * The one-line summary of {@code pairpulse bench sketch}, printed last:
 * <pre>
 * RESULT sketch pairs_per_s=&lt;n&gt; cms_ratio_vs_streamlib=&lt;x&gt; recall_at_100=&lt;x&gt; lift_rel_err_p95=&lt;x&gt; state_bytes=&lt;n&gt; exact_bytes=&lt;n&gt;
 * </pre>
 * {@code <n>} is a non-negative integer, {@code <x>} a non-negative decimal. The recall field is named
 * after k ({@code recall_at_100} with the default {@code --top 100}).
 *
 * @param pairsPerSecond pair occurrences per second through {@code PairEngine.addBasket}, one thread (JMH)
 * @param cmsRatio our count-min updates per second ÷ stream-lib's, at equal (ε, δ) (JMH, same run)
 * @param k the top-list size of the recall
 * @param recall recall@k of the baseline horizon
 * @param liftRelErrP95 95th percentile of the lift relative error over the exact top-k of the baseline horizon
 * @param stateBytes the engine's {@code stateBytes()}
 * @param exactBytes the exact state's bytes ({@link ExactCounts#stateBytes()})
 */
record SketchBenchResult(double pairsPerSecond, double cmsRatio, int k, double recall, double liftRelErrP95, long stateBytes,
    long exactBytes) {

  /** The format of {@link #line()} with the default k = 100. */
  static final Pattern LINE = Pattern.compile("RESULT sketch pairs_per_s=\\d+ cms_ratio_vs_streamlib=\\d+\\.\\d+"
      + " recall_at_100=\\d+\\.\\d+ lift_rel_err_p95=\\d+\\.\\d+ state_bytes=\\d+ exact_bytes=\\d+");

  SketchBenchResult {
    requireFinite("pairs_per_s", pairsPerSecond);
    requireFinite("cms_ratio_vs_streamlib", cmsRatio);
    requireFinite("recall", recall);
    requireFinite("lift_rel_err_p95", liftRelErrP95);
    if (k < 1 || stateBytes < 0 || exactBytes < 0) {
      throw new IllegalArgumentException("k must be >= 1 and byte counts >= 0");
    }
  }

  private static void requireFinite(String name, double value) {
    if (!(value >= 0) || Double.isInfinite(value)) {
      throw new IllegalArgumentException(name + " must be finite and >= 0, got " + value);
    }
  }

  String line() {
    return String.format(Locale.ROOT,
        "RESULT sketch pairs_per_s=%d cms_ratio_vs_streamlib=%.3f recall_at_%d=%.3f lift_rel_err_p95=%.4f state_bytes=%d exact_bytes=%d",
        Math.round(pairsPerSecond), cmsRatio, k, recall, liftRelErrP95, stateBytes, exactBytes);
  }
}
