package org.pairpulse.serve.floor;

import java.util.Arrays;
import java.util.BitSet;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import org.pairpulse.sketch.stats.Multiplicity;
import org.pairpulse.sketch.table.HorizonTable;
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
 * as seen from outside. A screen reads each published row's p-value alone
 * ({@link HorizonTable#associationPValue(int)}: counts and E, none of the other measures) and neither sorts the
 * horizon nor computes its rows' statistics: which pairs pass depends only on the p-values (the step's threshold
 * is a function of their multiset), so the pass set is the one a step over the horizon's sorted list of
 * statistics gives ({@code OfferScreenTest} checks it against that step).
 */
public final class OfferScreen {
  private final FlooredTable table;
  private final double falseDiscoveryRate;
  private final Map<String, Horizon> horizons = new ConcurrentHashMap<>();

  /** One horizon's screen: which of its published rows pass. */
  public static final class Horizon {
    static final Horizon EMPTY = new Horizon(null, 0, 0, new BitSet());

    private final HorizonTable held;
    private final int screened;
    private final int passed;
    private final BitSet passingRows;

    private Horizon(HorizonTable held, int screened, int passed, BitSet passingRows) {
      this.held = held;
      this.screened = screened;
      this.passed = passed;
      this.passingRows = passingRows;
    }

    /** Pairs tested (the published pairs of the horizon). */
    public int screened() {
      return screened;
    }

    /** Pairs that pass. */
    public int passed() {
      return passed;
    }

    /** Whether {@code pair} (a published pair of this horizon and table version, by identity) passes. */
    public boolean passes(PairStats pair) {
      if (passed == 0) {
        return false;
      }
      int row = held.rowOf(pair.itemA(), pair.itemB());
      return row >= 0 && passingRows.get(row) && held.row(row) == pair;
    }
  }

  private OfferScreen(FlooredTable table, double falseDiscoveryRate) {
    this.table = table;
    this.falseDiscoveryRate = falseDiscoveryRate;
  }

  /** The screen of one horizon: every published row's p-value, one step. */
  private Horizon screen(String name) {
    HorizonTable held = table.table().horizon(name).orElseThrow();
    int rowCount = held.rowCount();
    int[] rows = new int[rowCount];
    double[] p = new double[rowCount];
    int n = 0;
    for (int row = 0; row < rowCount; row++) {
      if (table.publishes(name, row)) {
        rows[n] = row;
        p[n] = held.associationPValue(row);
        n++;
      }
    }
    boolean[] pass = Multiplicity.benjaminiHochberg(Arrays.copyOf(p, n), falseDiscoveryRate);
    BitSet passing = new BitSet(rowCount);
    for (int i = 0; i < n; i++) {
      if (pass[i]) {
        passing.set(rows[i]);
      }
    }
    return new Horizon(held, n, passing.cardinality(), passing);
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
