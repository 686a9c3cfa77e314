package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashSet;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.Test;

class MeasureTest {

    @Test
    void wireNamesAreTheDocumentedStableLowerCaseNames() {
        // the serve layer exposes these: changing one breaks clients
        Map<Measure, String> expected = Map.ofEntries(
                Map.entry(Measure.SUPPORT, "support"),
                Map.entry(Measure.CONFIDENCE, "confidence"),
                Map.entry(Measure.LIFT, "lift"),
                Map.entry(Measure.SHRUNK_LIFT, "shrunk_lift"),
                Map.entry(Measure.LIFT_LOWER, "lift_lower"),
                Map.entry(Measure.LEVERAGE, "leverage"),
                Map.entry(Measure.CONVICTION, "conviction"),
                Map.entry(Measure.KULCZYNSKI, "kulczynski"),
                Map.entry(Measure.SIGNED_ROOT_G2, "signed_root_g2"),
                Map.entry(Measure.LIFT_UNADJUSTED, "lift_unadjusted"),
                Map.entry(Measure.SHRUNK_LIFT_UNADJUSTED, "shrunk_lift_unadjusted"),
                Map.entry(Measure.LIFT_LOWER_UNADJUSTED, "lift_lower_unadjusted"),
                Map.entry(Measure.LEVERAGE_UNADJUSTED, "leverage_unadjusted"),
                Map.entry(Measure.CONVICTION_UNADJUSTED, "conviction_unadjusted"),
                Map.entry(Measure.SIGNED_ROOT_G2_UNADJUSTED, "signed_root_g2_unadjusted"));
        assertEquals(expected.size(), Measure.values().length);
        Set<String> seen = new HashSet<>();
        for (Measure measure : Measure.values()) {
            assertEquals(expected.get(measure), measure.wireName());
            assertEquals(measure.wireName().toLowerCase(Locale.ROOT), measure.wireName());
            assertTrue(seen.add(measure.wireName()));
            assertSame(measure, Measure.fromWireName(measure.wireName()));
        }
    }

    @Test
    void unknownWireNameListsTheValidOnes() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Measure.fromWireName("LIFT"));
        for (Measure measure : Measure.values()) {
            assertTrue(e.getMessage().contains(measure.wireName()), e.getMessage());
        }
        assertTrue(e.getMessage().contains("'LIFT'"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> Measure.fromWireName(null));
        assertThrows(IllegalArgumentException.class, () -> Measure.fromWireName(""));
    }

    @Test
    void directedMeasuresReadTheStrongerDirection() {
        // N 1000, n_a 100, n_b 400, n_ab 80: confidences 0.8 and 0.2 (hand-computed), convictions
        // (1 − 0.4)/(1 − 0.8) = 3 and (1 − 0.1)/(1 − 0.2) = 1.125
        PairMeasures m = PairMeasures.of(PairCounts.exact(1_000, 100, 400, 80));
        assertEquals(0.8, Measure.CONFIDENCE.of(m), 1e-12);
        assertEquals(3.0, Measure.CONVICTION.of(m), 1e-12);
        // the symmetric ones read their accessor: lift 1000·80/(100·400) = 2
        assertEquals(2.0, Measure.LIFT.of(m), 1e-12);
        assertEquals(0.08, Measure.SUPPORT.of(m), 1e-12);
        assertEquals(0.08 - 0.1 * 0.4, Measure.LEVERAGE.of(m), 1e-12);
        assertEquals(0.5, Measure.KULCZYNSKI.of(m), 1e-12);
        assertEquals(m.liftLower(), Measure.LIFT_LOWER.of(m));
        assertEquals(m.shrunkLift(), Measure.SHRUNK_LIFT.of(m));
        assertEquals(m.signedRootGSquared(), Measure.SIGNED_ROOT_G2.of(m));
        // without size classes each textbook twin equals its size-adjusted measure
        for (Measure measure : Measure.values()) {
            assertEquals(measure.of(m), measure.unadjusted().of(m), 0.0, measure.wireName());
        }
        assertSame(Measure.LIFT_UNADJUSTED, Measure.LIFT.unadjusted());
        assertSame(Measure.SUPPORT, Measure.SUPPORT.unadjusted());
        // the reversed pair gives the same value for every measure
        PairMeasures reversed = PairMeasures.of(PairCounts.exact(1_000, 400, 100, 80));
        for (Measure measure : Measure.values()) {
            assertEquals(measure.of(m), measure.of(reversed), 1e-12, measure.wireName());
        }
    }
}
