package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

class InputValidationTest {

    @ParameterizedTest
    @ValueSource(doubles = {Double.NaN, -1.0, -Double.MIN_VALUE, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY})
    void estimateRejectsBadNumbersInEveryPosition(double bad) {
        assertThrows(IllegalArgumentException.class, () -> new Estimate(bad, 0, 1));
        assertThrows(IllegalArgumentException.class, () -> new Estimate(1, bad, 1));
        assertThrows(IllegalArgumentException.class, () -> new Estimate(1, 0, bad));
        assertThrows(IllegalArgumentException.class, () -> Estimate.exact(bad));
    }

    @Test
    void estimateRejectsOutOfOrderBounds() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> new Estimate(5, 6, 7));
        assertTrue(e.getMessage().contains("lower <= value <= upper"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> new Estimate(5, 1, 4));
    }

    @Test
    void estimateExactAndScaled() {
        Estimate exact = Estimate.exact(2.5);
        assertEquals(new Estimate(2.5, 2.5, 2.5), exact);
        assertTrue(exact.isExact());
        assertFalse(new Estimate(2.5, 2, 3).isExact());
        assertEquals(new Estimate(5, 4, 6), new Estimate(2.5, 2, 3).scaledBy(2));
        assertThrows(IllegalArgumentException.class, () -> exact.scaledBy(-1));
        assertThrows(IllegalArgumentException.class, () -> new Estimate(1e300, 1e300, 1e300).scaledBy(1e300));
    }

    @Test
    void pairCountsValidatesBasketsAndNulls() {
        Estimate one = Estimate.exact(1);
        assertThrows(IllegalArgumentException.class, () -> new PairCounts(-1, one, one, one));
        assertThrows(IllegalArgumentException.class, () -> new PairCounts(Double.NaN, one, one, one));
        assertThrows(NullPointerException.class, () -> new PairCounts(1, null, one, one));
        assertThrows(NullPointerException.class, () -> new PairCounts(1, one, null, one));
        assertThrows(NullPointerException.class, () -> new PairCounts(1, one, one, null));
        // overcounted relations are allowed (sketches overcount); PairMeasures clamps them
        PairCounts overcounted = PairCounts.exact(10, 20, 5, 30);
        assertEquals(30, overcounted.countAB().value());
        assertEquals(PairCounts.exact(30, 60, 15, 90), overcounted.scaledBy(3));
    }

    @Test
    void settingsDefaultsAndValidation() {
        MeasureSettings defaults = MeasureSettings.defaults();
        assertEquals(0.95, defaults.confidenceLevel());
        assertEquals(10.0, defaults.shrinkPriorBaskets());
        assertEquals(0.95, defaults.bundleConfidence());
        for (double level : new double[] {0, 1, -0.1, 1.5, Double.NaN}) {
            assertThrows(IllegalArgumentException.class, () -> new MeasureSettings(level, 10, 0.95));
        }
        for (double prior : new double[] {-1, Double.NaN, Double.POSITIVE_INFINITY}) {
            assertThrows(IllegalArgumentException.class, () -> new MeasureSettings(0.95, prior, 0.95));
        }
        for (double bundle : new double[] {0, 1.01, Double.NaN}) {
            assertThrows(IllegalArgumentException.class, () -> new MeasureSettings(0.95, 10, bundle));
        }
        new MeasureSettings(0.5, 0, 1.0); // boundaries that are allowed
    }

    @ParameterizedTest
    @ValueSource(doubles = {0.5, 0.8, 0.9, 0.95, 0.99, 0.999})
    void zScoreMatchesTheNormalQuantile(double level) {
        // reference: commons-math NormalDistribution's inverse CDF (a different algorithm from erfInv)
        double expected = new NormalDistribution(0, 1).inverseCumulativeProbability((1 + level) / 2);
        assertEquals(expected, new MeasureSettings(level, 10, 0.95).zScore(), 1e-8);
    }

    @Test
    void zScoreAtNinetyFivePercent() {
        // 1.959964: the two-sided 95% normal quantile, a standard table value (from memory)
        assertEquals(1.959964, MeasureSettings.defaults().zScore(), 1e-6);
    }
}
