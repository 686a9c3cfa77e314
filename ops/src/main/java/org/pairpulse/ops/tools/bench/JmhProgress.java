package org.pairpulse.ops.tools.bench;

import java.io.PrintWriter;
import java.nio.charset.Charset;
import java.util.Collection;
import java.util.Locale;
import org.openjdk.jmh.infra.BenchmarkParams;
import org.openjdk.jmh.infra.IterationParams;
import org.openjdk.jmh.results.BenchmarkResult;
import org.openjdk.jmh.results.IterationResult;
import org.openjdk.jmh.results.Result;
import org.openjdk.jmh.results.RunResult;
import org.openjdk.jmh.runner.IterationType;
import org.openjdk.jmh.runner.format.OutputFormat;

/**
 * A compact JMH output: one progress line per benchmark and per iteration instead of JMH's full report.
 * JMH's own chatter (headers, the blackhole notes) is dropped; what a forked JVM writes on its own
 * (crashes, VM warnings) goes to {@code err}. Benchmark failures still reach the caller as JMH's
 * {@code RunnerException} because runs are made with {@code shouldFailOnError(true)}.
 */
final class JmhProgress implements OutputFormat {
  private final PrintWriter out;
  private final PrintWriter err;

  JmhProgress(PrintWriter out, PrintWriter err) {
    this.out = out;
    this.err = err;
  }

  /** The benchmark method's simple name, e.g. {@code CountMinBenchmark.streamLib}. */
  static String shortName(BenchmarkParams params) {
    String full = params.getBenchmark();
    int method = full.lastIndexOf('.');
    int type = full.lastIndexOf('.', method - 1);
    return full.substring(type + 1);
  }

  @Override
  public void startBenchmark(BenchmarkParams params) {
    StringBuilder line = new StringBuilder("  jmh ").append(shortName(params));
    for (String key : params.getParamsKeys()) {
      line.append(' ').append(key).append('=').append(params.getParam(key));
    }
    line.append(String.format(Locale.ROOT, " (forks %d, warmup %d x %s, measurement %d x %s, jvm args %s)",
        params.getForks(), params.getWarmup().getCount(), params.getWarmup().getTime(),
        params.getMeasurement().getCount(), params.getMeasurement().getTime(), params.getJvmArgs()));
    out.println(line);
    out.flush();
  }

  @Override
  public void iteration(BenchmarkParams params, IterationParams iteration, int index) {
    // reported when the iteration ends
  }

  @Override
  public void iterationResult(BenchmarkParams params, IterationParams iteration, int index, IterationResult data) {
    String kind = iteration.getType() == IterationType.WARMUP ? "warmup" : "measure";
    StringBuilder line = new StringBuilder(String.format(Locale.ROOT, "    %s %s %d/%d: %s", shortName(params), kind, index,
        iteration.getCount(), describe(data.getPrimaryResult())));
    for (String name : data.getSecondaryResults().keySet()) {
      line.append(" | ").append(name).append(' ').append(describe(data.getSecondaryResults().get(name)));
    }
    out.println(line);
    out.flush();
  }

  private static String describe(Result<?> result) {
    return String.format(Locale.ROOT, "%,.0f %s", result.getScore(), result.getScoreUnit());
  }

  @Override
  public void endBenchmark(BenchmarkResult result) {
    // the caller prints the summary
  }

  @Override
  public void startRun() {
    // nothing to say
  }

  @Override
  public void endRun(Collection<RunResult> result) {
    // the caller prints the summary
  }

  @Override
  public void print(String s) {
    // JMH's own report text: dropped (see the class comment)
  }

  @Override
  public void println(String s) {
    // JMH's own report text: dropped (see the class comment)
  }

  @Override
  public void verbosePrintln(String s) {
    // dropped
  }

  @Override
  public void write(int b) {
    err.write((char) (b & 0xFF)); // single bytes: ASCII in practice
  }

  @Override
  public void write(byte[] b) {
    err.write(new String(b, Charset.defaultCharset()));
  }

  @Override
  public void flush() {
    out.flush();
    err.flush();
  }

  @Override
  public void close() {
    flush(); // the streams belong to the caller
  }
}
