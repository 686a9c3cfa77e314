package org.pairpulse.ops.tools.bench;

import java.io.PrintWriter;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.Map;
import org.openjdk.jmh.results.RunResult;
import org.openjdk.jmh.runner.Runner;
import org.openjdk.jmh.runner.RunnerException;
import org.openjdk.jmh.runner.options.ChainedOptionsBuilder;
import org.openjdk.jmh.runner.options.OptionsBuilder;
import org.openjdk.jmh.runner.options.TimeValue;

/**
 * The JMH side of {@code bench sketch}: runs the benchmarks of one class and returns their scores in plain types.
 * Every JMH type of ops stays in this class and {@link JmhProgress}, so the CLI (picocli reflects on every command
 * class) loads no JMH class unless {@code bench sketch} runs: {@code run}, {@code demo} and the analysis commands
 * start without JMH on the class path.
 */
final class JmhRuns {
  private JmhRuns() {}

  /**
   * One benchmark method's result.
   *
   * @param score the primary score (operations per second)
   * @param error JMH's 99.9% confidence half-width of the score (NaN with one measurement)
   * @param secondary the auxiliary counters' scores by name
   */
  record Score(double score, double error, Map<String, Double> secondary) {}

  /** How every benchmark runs (JMH options; forks 0 runs in this JVM). */
  record Settings(int forks, int warmupIterations, int measurementIterations, int iterationMillis, String forkHeap) {}

  /**
   * Runs the benchmarks of {@code benchmarkClass} with {@code params} (JMH {@code @Param} values), one thread,
   * printing progress through {@link JmhProgress}.
   *
   * @return the score of each benchmark method by its simple name
   * @throws IllegalStateException when a benchmark fails (JMH's error is the cause)
   */
  static Map<String, Score> run(String benchmarkClass, Map<String, String> params, Settings settings, PrintWriter out,
      PrintWriter err) {
    ChainedOptionsBuilder options = new OptionsBuilder()
        .include(benchmarkClass.replace(".", "\\.") + "\\.")
        .forks(settings.forks())
        .warmupIterations(settings.warmupIterations())
        .warmupTime(TimeValue.milliseconds(settings.iterationMillis()))
        .measurementIterations(settings.measurementIterations())
        .measurementTime(TimeValue.milliseconds(settings.iterationMillis()))
        .threads(1)
        .shouldFailOnError(true);
    if (settings.forks() > 0) {
      options.jvmArgsAppend("-Xmx" + settings.forkHeap());
    }
    params.forEach(options::param);
    Collection<RunResult> runs;
    try {
      runs = new Runner(options.build(), new JmhProgress(out, err)).run();
    } catch (RunnerException e) {
      throw new IllegalStateException("JMH run of " + benchmarkClass + " failed: " + e.getMessage(), e);
    }
    Map<String, Score> scores = new LinkedHashMap<>();
    for (RunResult run : runs) {
      String benchmark = run.getParams().getBenchmark();
      Map<String, Double> secondary = new LinkedHashMap<>();
      run.getSecondaryResults().forEach((name, result) -> secondary.put(name, result.getScore()));
      scores.put(benchmark.substring(benchmark.lastIndexOf('.') + 1), new Score(run.getPrimaryResult().getScore(),
          run.getPrimaryResult().getScoreError(), secondary));
    }
    return scores;
  }
}
