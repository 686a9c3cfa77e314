package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.SplittableRandom;
import java.util.function.ToDoubleFunction;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** Properties every input must satisfy, and the degenerate inputs. */
class PairMeasuresPropertiesTest {

  /** Random consistent exact counts built from four random (possibly zero, non-integer) cells. */
  private static PairCounts randomTable(SplittableRandom random) {
    double scale = Math.pow(10, random.nextInt(6));
    double[] cell = new double[4];
    for (int i = 0; i < 4; i++) {
      cell[i] = random.nextInt(5) == 0 ? 0 : random.nextDouble() * scale;
    }
    return PairCounts.exact(cell[0] + cell[1] + cell[2] + cell[3], cell[0] + cell[1], cell[0] + cell[2], cell[0]);
  }

  private record Reader(String name, ToDoubleFunction<PairMeasures> read) {
  }

  private static final List<Reader> SCALE_INVARIANT = List.of(
      new Reader("support", PairMeasures::support),
      new Reader("confidenceAB", PairMeasures::confidenceAB),
      new Reader("confidenceBA", PairMeasures::confidenceBA),
      new Reader("lift", PairMeasures::lift),
      new Reader("leverage", PairMeasures::leverage),
      new Reader("convictionAB", PairMeasures::convictionAB),
      new Reader("convictionBA", PairMeasures::convictionBA),
      new Reader("kulczynski", PairMeasures::kulczynski),
      new Reader("imbalanceRatio", PairMeasures::imbalanceRatio));

  @ParameterizedTest
  @ValueSource(doubles = {1e-3, 0.37, 2.0, 7.5, 1e4})
  void ratioMeasuresAreScaleInvariantAndGSquaredIsNot(double factor) {
    SplittableRandom random = new SplittableRandom(7L);
    int positiveG = 0;
    for (int i = 0; i < 500; i++) {
      PairCounts counts = randomTable(random);
      PairMeasures base = PairMeasures.of(counts);
      PairMeasures scaled = PairMeasures.of(counts.scaledBy(factor));
      for (Reader reader : SCALE_INVARIANT) {
        Close.assertClose(reader.read().applyAsDouble(base), reader.read().applyAsDouble(scaled), 1e-9,
            reader.name() + " of " + counts);
      }
      // G² (and χ²) are sums of counts times scale-free logs: they scale linearly with the counts
      Close.assertClose(factor * base.gSquared(), scaled.gSquared(), 1e-9, "G² of " + counts);
      Close.assertClose(factor * base.chiSquare(), scaled.chiSquare(), 1e-9, "chi-square of " + counts);
      if (base.gSquared() > 1e-6) {
        positiveG++;
        assertNotEquals(base.gSquared(), scaled.gSquared(), 1e-9 * base.gSquared());
      }
    }
    assertTrue(positiveG > 100, "tables with association: " + positiveG);
  }

  @Test
  void shrunkLiftLiesBetweenOneAndLift() {
    SplittableRandom random = new SplittableRandom(11L);
    int checked = 0;
    for (int i = 0; i < 2000; i++) {
      PairCounts counts = randomTable(random);
      PairMeasures m = PairMeasures.of(counts);
      if (Double.isNaN(m.lift())) {
        continue;
      }
      checked++;
      double low = Math.min(1.0, m.lift());
      double high = Math.max(1.0, m.lift());
      assertTrue(m.shrunkLift() >= low * (1 - 1e-12) && m.shrunkLift() <= high * (1 + 1e-12),
          counts + " → " + m);
    }
    assertTrue(checked > 1000);
  }

  @Test
  void shrunkLiftApproachesLiftAsEvidenceGrows() {
    // same proportions, more baskets: the prior's 10 baskets weigh less and less
    PairCounts thin = PairCounts.exact(1_000, 20, 30, 3); // lift 5, E = 0.6
    double lift = PairMeasures.of(thin).lift();
    double previousGap = Double.POSITIVE_INFINITY;
    for (double factor : new double[] {1, 10, 100, 10_000}) {
      double gap = Math.abs(lift - PairMeasures.of(thin.scaledBy(factor)).shrunkLift());
      assertTrue(gap < previousGap, "gap " + gap + " at factor " + factor);
      previousGap = gap;
    }
    assertTrue(previousGap < 0.01 * lift);
    // hand-computed from the formula: (3 + 10) / (0.6 + 10) = 1.2264...
    assertEquals(13 / 10.6, PairMeasures.of(thin).shrunkLift(), 1e-12);
    // k = 0 turns shrinking off
    assertEquals(lift, PairMeasures.of(thin, new MeasureSettings(0.95, 0, 0.95)).shrunkLift(), 1e-12);
  }

  @Test
  void emptyHorizonGivesNaNRatiosAndNeverThrows() {
    PairMeasures m = PairMeasures.of(PairCounts.exact(0, 0, 0, 0));
    for (double ratio : new double[] {m.support(), m.confidenceAB(), m.confidenceBA(), m.lift(),
        m.liftLower(), m.liftUpper(), m.shrunkLift(), m.leverage(), m.convictionAB(), m.convictionBA(),
        m.kulczynski(), m.imbalanceRatio()}) {
      assertTrue(Double.isNaN(ratio), m::toString);
    }
    assertEquals(0.0, m.gSquared());
    assertEquals(0.0, m.chiSquare());
    assertEquals(1.0, m.gSquaredPValue());
    assertFalse(m.isBundle());
    assertFalse(m.isRepelling());
    for (Measure measure : Measure.values()) {
      measure.of(m); // defined for every measure, NaN or not
    }
  }

  @Test
  void itemNeverSeenGivesNaNForRatiosThroughIt() {
    PairMeasures m = PairMeasures.of(PairCounts.exact(100, 0, 10, 0));
    assertTrue(Double.isNaN(m.confidenceAB()));
    assertTrue(Double.isNaN(m.lift()));
    assertTrue(Double.isNaN(m.liftUpper()));
    assertTrue(Double.isNaN(m.kulczynski()));
    assertEquals(0.0, m.confidenceBA());
    assertEquals(0.0, m.support());
    assertEquals(1.0, m.imbalanceRatio(), 1e-12); // |0 − 10| / (0 + 10 − 0)
    assertFalse(m.isRepelling());
  }

  @Test
  void alwaysTogetherIsABundle() {
    PairMeasures m = PairMeasures.of(PairCounts.exact(1_000, 50, 50, 50));
    assertTrue(m.isBundle());
    assertEquals(1.0, m.kulczynski(), 1e-12);
    assertEquals(0.0, m.imbalanceRatio(), 1e-12);
    assertEquals(Double.POSITIVE_INFINITY, m.convictionAB());
    assertEquals(Double.POSITIVE_INFINITY, m.convictionBA());
    assertEquals(20.0, m.lift(), 1e-12); // 1000·50 / (50·50)
    assertTrue(m.signedRootGSquared() > 0);
    assertFalse(m.isRepelling());
    // one direction below the threshold: not a bundle
    assertFalse(PairMeasures.of(PairCounts.exact(1_000, 50, 100, 50)).isBundle());
    // the threshold is a setting
    assertTrue(PairMeasures.of(PairCounts.exact(1_000, 50, 100, 50), new MeasureSettings(0.95, 10, 0.5))
        .isBundle());
  }

  @Test
  void inEveryBasketIsIndependentAndConvictionUndefined() {
    PairMeasures m = PairMeasures.of(PairCounts.exact(200, 200, 200, 200));
    assertEquals(1.0, m.lift(), 1e-12);
    assertEquals(0.0, m.leverage(), 1e-12);
    assertTrue(Double.isNaN(m.convictionAB())); // (1 − 1) / (1 − 1)
    assertEquals(0.0, m.gSquared());
    assertTrue(m.isBundle());
    assertTrue(m.liftLower() <= 1.0 && m.liftUpper() >= 1.0);
  }

  @Test
  void overcountedPointValuesAreClampedToAConsistentTable() {
    // a sketch may report n_ab > n_a and n_b > N; measures equal those of the clamped table
    PairMeasures overcounted = PairMeasures.of(PairCounts.exact(100, 10, 130, 15));
    PairMeasures clamped = PairMeasures.of(PairCounts.exact(100, 10, 100, 10));
    assertEquals(clamped.toString(), overcounted.toString());
    assertEquals(1.0, overcounted.confidenceAB());
    assertTrue(overcounted.support() <= 1.0);
  }
}
