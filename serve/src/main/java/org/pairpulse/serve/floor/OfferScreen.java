package org.pairpulse.serve.floor;

import java.util.Collections;
import java.util.IdentityHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import org.pairpulse.sketch.stats.Multiplicity;
import org.pairpulse.sketch.table.PairStats;

/**
 * Which published pairs are real associations, after multiplicity: the screen of the offer lists (suggestions under
 * the association ranking, the report's offer list).
 *
 * <p>Every published pair of a horizon (the floored table's, so the screened set is what a user can see) is a test:
 * its one-sided size-adjusted p-value ({@link org.pairpulse.sketch.stats.PairMeasures#associationPValue()}: n_ab
 * against Poisson(E) at the sketch's least favourable bounds). A pair passes when the Benjamini–Hochberg step over all
 * of the horizon's screened pairs at false-discovery rate q passes it ({@link Multiplicity}; default
 * {@value Multiplicity#DEFAULT_FALSE_DISCOVERY_RATE}). The screened pairs are already a selection (the heavy pairs the
 * engine tracks), which the step cannot see: the published p-values are taken at the bounds that favour the null, and
 * the benchmark ({@code bench rules}) measures the share of listed pairs that are not real on streams of independent
 * items.
 *
 * <p>Built once per table version and rate ({@link FlooredTable#derived}), each horizon on first read; immutable
 * as seen from outside.
 */
public final class OfferScreen {
  private final FlooredTable table;
  private final double falseDiscoveryRate;
  private final Map<String, Horizon> horizons = new ConcurrentHashMap<>();

  /**
   * One horizon's screen.
   *
   * @param screened pairs tested (the published pairs of the horizon)
   * @param passed pairs that pass
   */
  public record Horizon(int screened, int passed, Set<PairStats> significant) {
    static final Horizon EMPTY = new Horizon(0, 0, Set.of());

    /** Whether {@code pair} (a published pair of this horizon, by identity) passes. */
    public boolean passes(PairStats pair) {
      return significant.contains(pair);
    }
  }

  private OfferScreen(FlooredTable table, double falseDiscoveryRate) {
    this.table = table;
    this.falseDiscoveryRate = falseDiscoveryRate;
  }

  /** The screen of one horizon: every published pair's p-value (the horizon's measures), one step. */
  private Horizon screen(String name) {
    List<PairStats> pairs = table.pairs(name);
    double[] p = new double[pairs.size()];
    for (int i = 0; i < p.length; i++) {
      p[i] = pairs.get(i).measures().associationPValue();
    }
    boolean[] pass = Multiplicity.benjaminiHochberg(p, falseDiscoveryRate);
    Set<PairStats> significant = Collections.newSetFromMap(new IdentityHashMap<>());
    for (int i = 0; i < p.length; i++) {
      if (pass[i]) {
        significant.add(pairs.get(i));
      }
    }
    return new Horizon(p.length, significant.size(), Collections.unmodifiableSet(significant));
  }

  /** The screen of {@code table} at the default rate, built on first use and shared. */
  public static OfferScreen of(FlooredTable table) {
    return of(table, Multiplicity.DEFAULT_FALSE_DISCOVERY_RATE);
  }

  /** The screen of {@code table} at false-discovery rate {@code q}, built on first use and shared. */
  public static OfferScreen of(FlooredTable table, double q) {
    return table.derived(new Key(q), t -> new OfferScreen(t, q));
  }

  private record Key(double falseDiscoveryRate) {}

  /** The screen of a horizon (empty for an unknown one). */
  public Horizon horizon(String name) {
    if (!table.horizonNames().contains(name)) {
      return Horizon.EMPTY;
    }
    return horizons.computeIfAbsent(name, this::screen);
  }
}
