package org.pairpulse.sketch.stats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class MultiplicityTest {

  @Test
  void benjaminiHochbergHandComputed() {
    // m = 5, q = 0.05: thresholds 0.01, 0.02, 0.03, 0.04, 0.05; sorted p 0.001, 0.015, 0.029, 0.041, 0.3:
    // the largest i with p(i) <= 0.01·i is i = 3 (0.029 <= 0.03; 0.041 > 0.04), so the three smallest pass
    double[] p = {0.3, 0.029, 0.001, 0.041, 0.015};
    assertArrayEquals(new boolean[] {false, true, true, false, true}, Multiplicity.benjaminiHochberg(p, 0.05));
    assertEquals(0.029, Multiplicity.benjaminiHochbergThreshold(p, 0.05));
    // step-up: a p-value above its own threshold passes when a larger one is under its own (0.02 > 0.01·1)
    assertArrayEquals(new boolean[] {true, true}, Multiplicity.benjaminiHochberg(new double[] {0.02, 0.04}, 0.05));
    assertArrayEquals(new boolean[] {false, false}, Multiplicity.benjaminiHochberg(new double[] {0.5, Double.NaN}, 0.05));
    assertEquals(0, Multiplicity.benjaminiHochberg(new double[0], 0.05).length);
    assertThrows(IllegalArgumentException.class, () -> Multiplicity.benjaminiHochberg(p, 0));
  }

  @Test
  void uniformNullsRarelyPassAndStrongSignalsDo() {
    SplittableRandom random = new SplittableRandom(3);
    double falseShareSum = 0;
    for (int run = 0; run < 200; run++) {
      double[] p = new double[1000];
      for (int i = 0; i < p.length; i++) {
        p[i] = i < 20 ? 1e-9 * random.nextDouble() : random.nextDouble();
      }
      boolean[] pass = Multiplicity.benjaminiHochberg(p, 0.05);
      for (int i = 0; i < 20; i++) {
        assertTrue(pass[i]);
      }
      int passed = 0;
      int falsePasses = 0;
      for (int i = 0; i < p.length; i++) {
        passed += pass[i] ? 1 : 0;
        falsePasses += i >= 20 && pass[i] ? 1 : 0;
      }
      falseShareSum += (double) falsePasses / passed;
    }
    // FDR = E[false passes / passes] <= q·m0/m = 0.049 (with sampling slack over 200 runs)
    assertTrue(falseShareSum / 200 < 0.06, "false discovery share " + falseShareSum / 200);
  }
}
