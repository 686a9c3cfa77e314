package org.pairpulse.sketch.bench;

import java.time.Duration;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.AuxCounters;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * Pair-update throughput through the whole sketch layer: {@link PairEngine#addBasket} with the default
 * {@link EngineConfig} (horizons recent, day, baseline; the tracked item and pair tables), one thread.
 *
 * <p>The stream is pre-generated in the trial setup ({@link EngineStream}: Zipf over the catalog,
 * 1–8 items per basket, mean 4, event times over 7 days per lap so panes roll) and replayed in laps with
 * event time moving on. The primary score is baskets per second; the auxiliary counter {@code pairs}
 * adds each basket's b(b−1)/2 pair occurrences, so JMH reports pairs per second beside it.
 *
 * <p>A JMH benchmark in sketch's test sources (not a unit test: surefire runs {@code *Test} classes only), shipped in
 * sketch's test-jar. Run it as part of the sketch benchmark ({@code ops/pairpulse bench sketch}), or alone:
 * <pre>
 *   ops/pairpulse --help   # builds once
 *   java -cp "ops/target/pairpulse-ops.jar:ops/target/lib/*" org.openjdk.jmh.Main PairEngineBenchmark \
 *       -f 1 -wi 2 -w 2s -i 3 -r 2s -jvmArgsAppend -Xmx2g
 * </pre>
 */
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class PairEngineBenchmark {
  /** Event time one lap of the stream covers. */
  public static final long LAP_MILLIS = Duration.ofDays(7).toMillis();

  /** The engine and the stream it is fed. */
  @State(Scope.Thread)
  public static class EngineState {
    @Param("1048576")
    public int streamBaskets;

    @Param("10000")
    public int catalogItems;

    @Param("42")
    public long seed;

    PairEngine engine;
    EngineStream stream;
    int next;
    long lapOffsetMillis;

    @Setup(Level.Trial)
    public void setUp() {
      stream = EngineStream.generate(seed, catalogItems, streamBaskets, LAP_MILLIS);
      engine = new PairEngine(EngineConfig.defaults());
      next = 0;
      lapOffsetMillis = 0;
    }
  }

  /** Pair occurrences added in the current iteration (reported per second). */
  @State(Scope.Thread)
  @AuxCounters(AuxCounters.Type.OPERATIONS)
  public static class PairCounter {
    public long pairs;

    @Setup(Level.Iteration)
    public void reset() {
      pairs = 0;
    }
  }

  @Benchmark
  public void addBasket(EngineState state, PairCounter counter) {
    int i = state.next;
    EngineStream stream = state.stream;
    state.engine.addBasket(stream.eventMillis[i] + state.lapOffsetMillis, stream.baskets[i]);
    counter.pairs += stream.pairsOfBasket[i];
    if (++i == stream.size()) {
      i = 0;
      state.lapOffsetMillis += stream.spanMillis;
    }
    state.next = i;
  }
}
