package org.pairpulse.serve.suggest;

import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.OfferScreen;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/**
 * The suggester's view of one floored table: per horizon, each item's first {@code limit}
 * neighbours (best first) as directed entries item ⇒ other in flat arrays (compressed sparse rows),
 * with what a suggestion reads precomputed: the other item's id, the rule's confidence, the pair's
 * support, bundle flag and offer screen, and the per-pair contribution φ of each measure (computed on first use
 * per measure, then shared). Built once per table version and limit, each horizon when a request first reads it;
 * immutable afterwards.
 *
 * <p>Memory: about 40 bytes per directed entry plus 8 per measure used; with the default limit of
 * 500 and 200,000 pairs in three horizons, at most 1.2 M entries (~50 MB), usually far fewer.
 */
final class SuggestIndex {
  final Map<String, Integer> ids;
  final String[] names;
  private final FlooredTable table;
  private final int limit;
  private final Map<String, Horizon> horizons = new ConcurrentHashMap<>();

  /** One horizon's rows. */
  static final class Horizon {
    final String name;
    /** Row of item id i: entries start[i] .. start[i + 1] − 1, best first. */
    final int[] start;
    final int[] other;
    final PairStats[] stats;
    final boolean[] forward;
    final double[] confidence;
    final double[] support;
    final boolean[] bundle;
    /** Whether the entry's pair passes the offer screen ({@link OfferScreen}): a real association after multiplicity. */
    final boolean[] significant;
    /**
     * ln s(c) = ln(n_c / N) of item id c in this horizon, NaN when its count is not published (held back by the
     * floor, or not tracked): the prior of the posterior ranking.
     */
    final double[] lnSupport;
    /** Ids of the items with a published count, most frequent first (n_c descending, then id string ascending). */
    final int[] popular;
    private final ConcurrentHashMap<Measure, double[]> contributions = new ConcurrentHashMap<>();

    Horizon(String name, int[] start, int entries, double[] lnSupport, int[] popular) {
      this.name = name;
      this.lnSupport = lnSupport;
      this.popular = popular;
      this.start = start;
      this.other = new int[entries];
      this.stats = new PairStats[entries];
      this.forward = new boolean[entries];
      this.confidence = new double[entries];
      this.support = new double[entries];
      this.bundle = new boolean[entries];
      this.significant = new boolean[entries];
    }

    /** φ(m(item ⇒ other)) per entry, NaN where the measure is undefined. */
    double[] contributions(Measure measure) {
      return contributions.computeIfAbsent(measure, m -> {
        double[] out = new double[other.length];
        for (int e = 0; e < out.length; e++) {
          double value = Suggester.directed(m, stats[e].measures(), forward[e]);
          out[e] = Double.isNaN(value) ? Double.NaN : Suggester.contribution(m, value);
        }
        return out;
      });
    }
  }

  private SuggestIndex(FlooredTable table, int limit) {
    this.table = table;
    this.limit = limit;
    // ids: every item of the table's rows and item counts (a superset of the published ones; an id without entries
    // or a published count reads as unknown), so that a horizon is built only when a request reads it
    Map<String, Integer> idOf = new HashMap<>();
    for (String h : table.horizonNames()) {
      org.pairpulse.sketch.table.HorizonTable raw = table.table().horizon(h).orElseThrow();
      for (int row = 0; row < raw.rowCount(); row++) {
        idOf.putIfAbsent(raw.itemA(row), idOf.size());
        idOf.putIfAbsent(raw.itemB(row), idOf.size());
      }
      for (String item : raw.itemCounts().keySet()) {
        idOf.putIfAbsent(item, idOf.size());
      }
    }
    this.ids = idOf;
    this.names = new String[idOf.size()];
    idOf.forEach((name, id) -> names[id] = name);
  }

  /** One horizon's rows: the first {@code limit} published neighbours of every item, best first. */
  private Horizon build(String h) {
    Map<String, Integer> idOf = ids;
    OfferScreen.Horizon screen = OfferScreen.of(table).horizon(h); // sorts the horizon: its lists follow from the order
    int[] start = new int[names.length + 1];
    for (int id = 0; id < names.length; id++) {
      start[id + 1] = start[id] + Math.min(limit, table.neighbours(names[id], h).size());
    }
    double[] lnSupport = new double[names.length];
    java.util.Arrays.fill(lnSupport, Double.NaN);
    double baskets = table.baskets(h);
    Map<String, org.pairpulse.sketch.stats.Estimate> counts = table.items(h);
    List<Integer> published = new java.util.ArrayList<>(counts.size());
    for (Map.Entry<String, org.pairpulse.sketch.stats.Estimate> item : counts.entrySet()) {
      double support = item.getValue().value() / baskets;
      if (support > 0 && !Double.isInfinite(support)) { // false for NaN (N under the floor)
        int id = idOf.get(item.getKey());
        lnSupport[id] = Math.log(Math.min(1.0, support));
        published.add(id);
      }
    }
    published.sort((x, y) -> {
      int byCount = Double.compare(lnSupport[y], lnSupport[x]);
      return byCount != 0 ? byCount : names[x].compareTo(names[y]);
    });
    int[] popular = published.stream().mapToInt(Integer::intValue).toArray();
    Horizon horizon = new Horizon(h, start, start[names.length], lnSupport, popular);
    for (int id = 0; id < names.length; id++) {
      List<PairStats> row = table.neighbours(names[id], h);
      int e = start[id];
      for (int i = 0; i < start[id + 1] - start[id]; i++, e++) {
        PairStats p = row.get(i);
        boolean fwd = p.itemA().equals(names[id]);
        PairMeasures m = p.measures();
        horizon.other[e] = idOf.get(fwd ? p.itemB() : p.itemA());
        horizon.stats[e] = p;
        horizon.forward[e] = fwd;
        horizon.confidence[e] = fwd ? m.confidenceAB() : m.confidenceBA();
        horizon.support[e] = m.support();
        horizon.bundle[e] = m.isBundle();
        horizon.significant[e] = screen.passes(p);
      }
    }
    horizon.contributions(Measure.SHRUNK_LIFT); // the default measure, ready before the first request
    return horizon;
  }

  /** The index of {@code table} for {@code limit}, built on first use and shared. */
  static SuggestIndex of(FlooredTable table, int limit) {
    return table.derived(new Key(limit), t -> new SuggestIndex(t, limit));
  }

  private record Key(int limit) {}

  /** Builds every horizon the table lists now (a server warms the index off the request path). */
  SuggestIndex buildAll() {
    for (String h : table.horizonNames()) {
      horizon(h);
    }
    return this;
  }

  /** A horizon's rows, built on first read (null for a horizon the table does not list). */
  Horizon horizon(String name) {
    if (!table.horizonNames().contains(name)) {
      return null;
    }
    return horizons.computeIfAbsent(name, this::build);
  }
}
