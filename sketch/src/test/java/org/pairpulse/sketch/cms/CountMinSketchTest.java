package org.pairpulse.sketch.cms;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.ZipfSampler;

/** Count-min sketches against exact maps and against stream-lib's sketches at equal (ε, δ). */
class CountMinSketchTest {

  /** Zipf-like keys: key k with probability ∝ 1/k (a seeded stream with a heavy head and a long tail). */
  private static Map<Long, Long> zipfStream(long seed, int distinct, int length, java.util.function.BiConsumer<Long, Long> sink) {
    SplittableRandom random = new SplittableRandom(seed);
    ZipfSampler zipf = new ZipfSampler(distinct, 1.0);
    Map<Long, Long> exact = new HashMap<>();
    for (int n = 0; n < length; n++) {
      int rank = zipf.sample(random);
      long key = 0x1234_5678L * (rank + 1) + 17; // distinct, non-sequential keys
      long weight = 1 + random.nextInt(3);
      exact.merge(key, weight, Long::sum);
      sink.accept(key, weight);
    }
    return exact;
  }

  @Test
  void sizingFollowsCormodeMuthukrishnan() {
    // width ⌈e/ε⌉ rounded up to a power of two, depth ⌈ln 1/δ⌉ (Cormode and Muthukrishnan 2005, §3)
    assertEquals(4096, CountMinSketch.widthFor(0.001)); // e/0.001 = 2718.3 → 4096
    assertEquals(2048, CountMinSketch.widthFor(0.0014)); // e/0.0014 = 1941.6 → 2048
    assertEquals(4, CountMinSketch.depthFor(0.02)); // ln 50 = 3.91 → 4
    assertEquals(5, CountMinSketch.depthFor(0.01)); // ln 100 = 4.61 → 5
    CountMinSketch sketch = CountMinSketch.forError(0.001, 0.02, UpdateRule.LINEAR, 1);
    assertTrue(sketch.epsilon() <= 0.001 && sketch.delta() <= 0.02);
    assertThrows(IllegalArgumentException.class, () -> CountMinSketch.widthFor(0));
    assertThrows(IllegalArgumentException.class, () -> CountMinSketch.depthFor(1.5));
    assertThrows(IllegalArgumentException.class, () -> new CountMinSketch(1000, 4, UpdateRule.LINEAR, 1));
  }

  @ParameterizedTest
  @EnumSource(UpdateRule.class)
  void neverUndercountsAndTheErrorBoundHoldsForAtLeastOneMinusDeltaOfQueries(UpdateRule rule) {
    CountMinSketch sketch = CountMinSketch.forError(0.002, 0.05, rule, 99);
    Map<Long, Long> exact = zipfStream(5, 50_000, 400_000, sketch::add);
    int beyondBound = 0;
    for (Map.Entry<Long, Long> e : exact.entrySet()) {
      double estimate = sketch.estimate(e.getKey());
      assertTrue(estimate >= e.getValue(), "undercount: " + estimate + " < " + e.getValue());
      assertTrue(sketch.lowerBound(e.getKey()) <= estimate && sketch.upperBound(e.getKey()) == estimate);
      if (estimate - e.getValue() > sketch.maxError()) {
        beyondBound++;
      }
    }
    // Cormode and Muthukrishnan 2005, Theorem 1: P[estimate > f + εW] ≤ δ for each query
    double share = (double) beyondBound / exact.size();
    assertTrue(share <= sketch.delta(), rule + ": " + share + " of queries beyond ε·W, δ = " + sketch.delta());
    assertEquals(exact.values().stream().mapToLong(Long::longValue).sum(), sketch.totalWeight(), 1e-6);
  }

  @Test
  void conservativeUpdateIsNeverWorseThanLinear() {
    CountMinSketch linear = new CountMinSketch(1024, 4, UpdateRule.LINEAR, 3);
    CountMinSketch conservative = new CountMinSketch(1024, 4, UpdateRule.CONSERVATIVE, 3);
    Map<Long, Long> exact = zipfStream(8, 20_000, 100_000, (k, w) -> {
      linear.add(k, w);
      conservative.add(k, w);
    });
    double linearError = 0;
    double conservativeError = 0;
    for (Map.Entry<Long, Long> e : exact.entrySet()) {
      double lin = linear.estimate(e.getKey());
      double con = conservative.estimate(e.getKey());
      assertTrue(con <= lin && con >= e.getValue(), "Estan and Varghese 2002: f ≤ CU ≤ linear");
      linearError += lin - e.getValue();
      conservativeError += con - e.getValue();
    }
    assertTrue(conservativeError < linearError, "conservative update must gain on a skewed stream");
  }

  @Test
  void linearSketchesMergeSubtractAndScale() {
    CountMinSketch a = new CountMinSketch(256, 3, UpdateRule.LINEAR, 7);
    CountMinSketch b = new CountMinSketch(256, 3, UpdateRule.LINEAR, 7);
    CountMinSketch union = new CountMinSketch(256, 3, UpdateRule.LINEAR, 7);
    zipfStream(1, 1_000, 5_000, (k, w) -> {
      a.add(k, w);
      union.add(k, w);
    });
    zipfStream(2, 1_000, 5_000, (k, w) -> {
      b.add(k, w);
      union.add(k, w);
    });
    CountMinSketch merged = a.copy();
    merged.merge(b);
    assertTrue(merged.sameCountersAs(union), "merge of disjoint streams equals the sketch of the union");
    merged.subtract(b);
    assertTrue(merged.sameCountersAs(a), "subtracting a part gives back the rest (integer weights are exact)");
    CountMinSketch doubled = a.copy();
    doubled.scale(2.0);
    doubled.scale(0.5);
    assertTrue(doubled.sameCountersAs(a), "scaling by powers of two is exact");
    CountMinSketch conservative = new CountMinSketch(256, 3, UpdateRule.CONSERVATIVE, 7);
    assertThrows(IllegalStateException.class, () -> conservative.subtract(conservative.copy()));
    assertThrows(IllegalArgumentException.class, () -> a.merge(new CountMinSketch(256, 3, UpdateRule.LINEAR, 8)));
  }

  /**
   * Side by side with stream-lib (com.clearspring.analytics:stream 2.9.8) at equal (ε, δ): our mean
   * overestimate must be no worse. stream-lib sizes width ⌈2/ε⌉ and depth ⌈−ln(1−confidence)/ln 2⌉.
   */
  @Test
  void meanOverestimateNoWorseThanStreamLib() {
    double epsilon = 0.001;
    double delta = 0.01;
    CountMinSketch ours = CountMinSketch.forError(epsilon, delta, UpdateRule.LINEAR, 21);
    CountMinSketch oursConservative = CountMinSketch.forError(epsilon, delta, UpdateRule.CONSERVATIVE, 21);
    com.clearspring.analytics.stream.frequency.CountMinSketch theirs =
        new com.clearspring.analytics.stream.frequency.CountMinSketch(epsilon, 1 - delta, 21);
    com.clearspring.analytics.stream.frequency.ConservativeAddSketch theirsConservative =
        new com.clearspring.analytics.stream.frequency.ConservativeAddSketch(epsilon, 1 - delta, 21);
    Map<Long, Long> exact = zipfStream(13, 100_000, 500_000, (k, w) -> {
      ours.add(k, w);
      oursConservative.add(k, w);
      theirs.add(k, w);
      theirsConservative.add(k, w);
    });
    double oursError = 0;
    double theirsError = 0;
    double oursCuError = 0;
    double theirsCuError = 0;
    for (Map.Entry<Long, Long> e : exact.entrySet()) {
      long truth = e.getValue();
      oursError += ours.estimate(e.getKey()) - truth;
      theirsError += theirs.estimateCount(e.getKey()) - truth;
      oursCuError += oursConservative.estimate(e.getKey()) - truth;
      theirsCuError += theirsConservative.estimateCount(e.getKey()) - truth;
      assertTrue(theirs.estimateCount(e.getKey()) >= truth, "reference sanity: stream-lib never undercounts");
    }
    int n = exact.size();
    assertTrue(oursError / n <= theirsError / n,
        "linear: ours " + oursError / n + " vs stream-lib " + theirsError / n);
    assertTrue(oursCuError / n <= theirsCuError / n,
        "conservative: ours " + oursCuError / n + " vs stream-lib " + theirsCuError / n);
  }

  /**
   * Rows hash independently: a key that collides with a heavy key in one row should rarely collide in
   * all of them. With width w and depth d, about n/w^d of n other keys collide in every row; double
   * hashing (h1 + r·h2) would make it n/w² (here 1,000,000/4,096 ≈ 244).
   */
  @Test
  void rowsCollideIndependently() {
    CountMinSketch sketch = new CountMinSketch(64, 4, UpdateRule.LINEAR, 5);
    sketch.add(42L, 1_000_000);
    SplittableRandom random = new SplittableRandom(3);
    int fullCollisions = 0;
    for (int i = 0; i < 1_000_000; i++) {
      if (sketch.estimate(random.nextLong()) >= 1_000_000) {
        fullCollisions++;
      }
    }
    assertTrue(fullCollisions <= 5, "keys colliding with the heavy key in every row: " + fullCollisions);
  }

  /**
   * The engine's fast paths against the plain API as the oracle: hashing a key once and updating several
   * sketches from its row hashes, and sketches whose counters are interleaved in one array, must give
   * exactly what independent sketches fed key by key give (estimates, debiased estimates, merge, scale,
   * copy, serialised counters, clear).
   */
  @ParameterizedTest
  @EnumSource(UpdateRule.class)
  void hashedAndInterleavedSketchesEqualPlainOnes(UpdateRule rule) throws Exception {
    CountMinSketch[] fast = CountMinSketch.interleaved(3, 512, 4, rule, 99L);
    CountMinSketch[] plain = new CountMinSketch[3];
    for (int k = 0; k < 3; k++) {
      plain[k] = new CountMinSketch(512, 4, rule, 99L);
    }
    CountMinSketch narrowPlain = new CountMinSketch(64, 4, rule, 99L); // same seed and depth, other width
    CountMinSketch narrowFast = new CountMinSketch(64, 4, rule, 99L);
    long[] rows = new long[8];
    SplittableRandom random = new SplittableRandom(5);
    for (int n = 0; n < 20_000; n++) {
      long key = random.nextLong(3_000) * 0x9E37_79B9L + 11;
      double weight = 1 + random.nextInt(4);
      fast[0].rowHashes(key, rows, 4);
      for (int k = 0; k < 3; k++) {
        fast[k].addHashed(rows, 4, weight * (k + 1));
        plain[k].add(key, weight * (k + 1));
      }
      narrowFast.addHashed(rows, 4, weight);
      narrowPlain.add(key, weight);
    }
    for (long k = 0; k < 3_000; k++) {
      long key = k * 0x9E37_79B9L + 11;
      fast[0].rowHashes(key, rows, 0);
      for (int s = 0; s < 3; s++) {
        assertEquals(plain[s].estimate(key), fast[s].estimate(key));
        assertEquals(plain[s].estimate(key), fast[s].estimateHashed(rows, 0));
        assertEquals(plain[s].debiasedEstimate(key), fast[s].debiasedEstimateHashed(rows, 0));
      }
      assertEquals(narrowPlain.estimate(key), narrowFast.estimateHashed(rows, 0));
    }
    for (int s = 0; s < 3; s++) {
      assertEquals(plain[s].totalWeight(), fast[s].totalWeight());
      assertTrue(fast[s].copy().sameCountersAs(plain[s]), "copy of interleaved sketch " + s);
      assertTrue(fast[s].sameCountersAs(plain[s]), "interleaved sketch " + s);
    }
    fast[1].scale(0.5);
    plain[1].scale(0.5);
    if (rule == UpdateRule.LINEAR) {
      fast[2].merge(plain[0]);
      plain[2].merge(plain[0]);
    }
    fast[0].clear();
    plain[0].clear();
    for (int s = 0; s < 3; s++) {
      assertTrue(fast[s].sameCountersAs(plain[s]), "after scale, merge and clear, sketch " + s);
      java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
      fast[s].writeCounters(new java.io.DataOutputStream(bytes));
      CountMinSketch back = new CountMinSketch(512, 4, rule, 99L);
      back.readCounters(new java.io.DataInputStream(new java.io.ByteArrayInputStream(bytes.toByteArray())));
      assertTrue(back.sameCountersAs(plain[s]), "serialised interleaved sketch " + s);
    }
  }

  /**
   * The count-mean-min estimate (Deng and Rafiei 2007, "New estimation algorithms for streaming data:
   * Count-min can do more") recomputed the slow way: each row's counter rebuilt from the exact stream
   * (every key whose column in that row is the query's), corrected by {@code c − (W − c)/(width − 1)},
   * the median over rows taken after sorting, then clamped to [estimate − εW, estimate]. Depth 4 (the
   * engine's) and an odd depth.
   */
  @ParameterizedTest
  @org.junit.jupiter.params.provider.ValueSource(ints = {4, 5})
  void debiasedEstimateIsTheCountMeanMinOfTheRows(int depth) {
    int width = 256;
    CountMinSketch sketch = new CountMinSketch(width, depth, UpdateRule.LINEAR, 7L);
    Map<Long, Double> exact = new HashMap<>();
    SplittableRandom random = new SplittableRandom(11);
    for (int n = 0; n < 30_000; n++) {
      long key = (long) (1 + 2_000 * Math.pow(random.nextDouble(), 3)); // skewed towards small keys
      double weight = 1 + random.nextInt(3);
      sketch.add(key, weight);
      exact.merge(key, weight, Double::sum);
    }
    double total = exact.values().stream().mapToDouble(Double::doubleValue).sum();
    long[] queryRows = new long[depth];
    long[] otherRows = new long[depth];
    int corrections = 0;
    for (long query = 1; query <= 2_000; query += 7) {
      sketch.rowHashes(query, queryRows, 0);
      double[] corrected = new double[depth];
      double upper = Double.POSITIVE_INFINITY;
      for (int row = 0; row < depth; row++) {
        double counter = 0;
        for (Map.Entry<Long, Double> e : exact.entrySet()) {
          sketch.rowHashes(e.getKey(), otherRows, 0);
          if (((int) otherRows[row] & (width - 1)) == ((int) queryRows[row] & (width - 1))) {
            counter += e.getValue();
          }
        }
        upper = Math.min(upper, counter);
        corrected[row] = counter - (total - counter) / (width - 1);
      }
      java.util.Arrays.sort(corrected);
      double median = depth % 2 == 1 ? corrected[depth / 2] : 0.5 * (corrected[depth / 2 - 1] + corrected[depth / 2]);
      double expected = Math.max(Math.max(0, upper - sketch.epsilon() * total), Math.min(upper, median));
      assertEquals(upper, sketch.estimate(query), 1e-9, "estimate of " + query);
      assertEquals(expected, sketch.debiasedEstimate(query), 1e-9 * Math.max(1, Math.abs(expected)), "debiased " + query);
      corrections += expected < upper - 1 ? 1 : 0;
    }
    assertTrue(corrections > 50, "the correction must matter for the check to mean something: " + corrections);
  }
}
