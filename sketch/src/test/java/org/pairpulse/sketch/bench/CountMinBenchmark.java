package org.pairpulse.sketch.bench;

import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.cms.UpdateRule;

/**
 * Raw count-min update throughput at equal (ε, δ): pairpulse's {@link CountMinSketch} (LINEAR, width
 * ⌈e/ε⌉ rounded up to a power of two, depth ⌈ln 1/δ⌉) against stream-lib's
 * {@code com.clearspring.analytics.stream.frequency.CountMinSketch} built with the same ε and
 * confidence 1 − δ (width ⌈2/ε⌉, depth ⌈−ln(1 − confidence)/ln 2⌉). Each invocation adds weight 1 to
 * the next of 2^20 pre-generated random 64-bit keys (stream-lib's {@code add(long, long)}).
 *
 * <p>A JMH benchmark in sketch's test sources (not a unit test: surefire runs {@code *Test} classes only), shipped in
 * sketch's test-jar. Run it as part of the sketch benchmark ({@code ops/pairpulse bench sketch}), or alone:
 * <pre>
 *   ops/pairpulse --help   # builds once
 *   java -cp "ops/target/pairpulse-ops.jar:ops/target/lib/*" org.openjdk.jmh.Main CountMinBenchmark \
 *       -f 1 -wi 2 -w 2s -i 3 -r 2s -jvmArgsAppend -Xmx2g
 * </pre>
 */
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class CountMinBenchmark {
  static final int KEY_COUNT = 1 << 20;

  /** Both sketches and the keys. */
  @State(Scope.Thread)
  public static class Sketches {
    @Param("0.001")
    public double epsilon;

    @Param("0.02")
    public double delta;

    @Param("42")
    public long seed;

    long[] keys;
    int next;
    CountMinSketch pairpulse;
    com.clearspring.analytics.stream.frequency.CountMinSketch streamLib;

    @Setup(Level.Trial)
    public void setUp() {
      SplittableRandom random = new SplittableRandom(seed);
      keys = new long[KEY_COUNT];
      for (int i = 0; i < KEY_COUNT; i++) {
        keys[i] = random.nextLong();
      }
      pairpulse = pairpulseSketch(epsilon, delta, seed);
      streamLib = streamLibSketch(epsilon, delta, seed);
      next = 0;
    }
  }

  /** pairpulse's sketch for (ε, δ). */
  public static CountMinSketch pairpulseSketch(double epsilon, double delta, long seed) {
    return CountMinSketch.forError(epsilon, delta, UpdateRule.LINEAR, seed);
  }

  /** stream-lib's sketch for the same (ε, δ): its constructor takes ε and confidence = 1 − δ. */
  public static com.clearspring.analytics.stream.frequency.CountMinSketch streamLibSketch(double epsilon, double delta, long seed) {
    return new com.clearspring.analytics.stream.frequency.CountMinSketch(epsilon, 1 - delta, (int) seed);
  }

  /** stream-lib's width for ε: ⌈2/ε⌉ (from its constructor). */
  public static int streamLibWidth(double epsilon) {
    return (int) Math.ceil(2 / epsilon);
  }

  /** stream-lib's depth for δ: ⌈−ln(δ)/ln 2⌉ with δ = 1 − confidence (from its constructor). */
  public static int streamLibDepth(double delta) {
    return (int) Math.ceil(-Math.log(1 - (1 - delta)) / Math.log(2));
  }

  @Benchmark
  public void pairpulseLinear(Sketches state) {
    int i = state.next;
    state.pairpulse.add(state.keys[i], 1.0);
    state.next = (i + 1) & (KEY_COUNT - 1);
  }

  @Benchmark
  public void streamLib(Sketches state) {
    int i = state.next;
    state.streamLib.add(state.keys[i], 1L);
    state.next = (i + 1) & (KEY_COUNT - 1);
  }
}
