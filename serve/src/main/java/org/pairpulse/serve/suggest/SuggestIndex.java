package org.pairpulse.serve.suggest;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.OfferScreen;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.HorizonTable;
import org.pairpulse.sketch.table.PairStats;

/**
 * The suggester's view of one floored table: per horizon, each item's first {@code limit} neighbours (best first) as
 * directed entries item ⇒ other in flat arrays, with what a suggestion reads precomputed: the other item's id, the
 * rule's confidence, the pair's support and bundle flag, and, when first asked, the offer screen's verdict and the
 * per-pair contribution φ of each measure. Built once per table version and limit, and computed on read like the
 * table: an item's entries when a request first reads that item (a backtest reads the items of a few evaluated
 * baskets per version, so it computes the measures of their pairs only, never a whole horizon), the offer screen when
 * a request under the association ranking first reads an item of the horizon, the priors (each item's support, the
 * popular order) when a request under the posterior ranking first needs them. Immutable as seen from outside; what
 * a reader computes first is published by compare-and-set, so every reader sees one object.
 *
 * <p>Memory: about 40 bytes per directed entry read plus 8 per measure used; with the default limit of 500 and
 * 200,000 pairs in three horizons, at most 1.2 M entries (~50 MB) once every item is read, usually far fewer.
 */
final class SuggestIndex {
  /** Item ids, given on first sight (an item's entries, an entry's other item, a published count): any order will do. */
  private final Map<String, Integer> ids = new ConcurrentHashMap<>();
  /** Name of each id; grows under the lock of {@link #register}, entries are never changed once written. */
  private volatile String[] names = new String[256];
  private final FlooredTable table;
  private final int limit;
  private final Map<String, Horizon> horizons = new ConcurrentHashMap<>();

  /** One item's entries in one horizon: its first {@code limit} published neighbours, best first. */
  static final class Entries {
    static final Entries NONE = new Entries(0);

    final int[] other;
    final PairStats[] stats;
    final boolean[] forward;
    final double[] confidence;
    final double[] support;
    final boolean[] bundle;
    private volatile boolean[] significant;
    private final ConcurrentHashMap<Measure, double[]> contributions = new ConcurrentHashMap<>();

    private Entries(int size) {
      this.other = new int[size];
      this.stats = new PairStats[size];
      this.forward = new boolean[size];
      this.confidence = new double[size];
      this.support = new double[size];
      this.bundle = new boolean[size];
    }

    int size() {
      return other.length;
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

    /**
     * Whether each entry's pair passes the offer screen ({@link OfferScreen}): a real association after
     * multiplicity. Only the association ranking reads it.
     */
    boolean[] significant(OfferScreen.Horizon screen) {
      boolean[] s = significant;
      if (s == null) {
        s = new boolean[other.length];
        for (int e = 0; e < s.length; e++) {
          s[e] = screen.passes(stats[e]);
        }
        significant = s;
      }
      return s;
    }
  }

  /**
   * The posterior ranking's priors in one horizon: ln s(c) = ln(n_c / N) per item id, NaN when its count is not
   * published (held back by the floor, or not tracked), and the ids of the items with a published count, most
   * frequent first (n_c descending, then id string ascending).
   */
  record Priors(double[] lnSupport, int[] popular) {
    /** ln s(c) of item id {@code id}; NaN without a published count (an id given after the priors has none). */
    double lnSupportOf(int id) {
      return id < lnSupport.length ? lnSupport[id] : Double.NaN;
    }
  }

  /** One horizon's entries, each item's on first read. */
  final class Horizon {
    final String name;
    private final Map<Integer, Entries> entries = new ConcurrentHashMap<>();
    private volatile Priors priors;
    private volatile OfferScreen.Horizon screen;

    Horizon(String name) {
      this.name = name;
    }

    /** The entries of item id {@code id}, built on first read (the first built is kept: readers share it). */
    Entries entries(int id) {
      Entries e = entries.get(id);
      if (e == null) {
        Entries built = build(name(id));
        e = entries.putIfAbsent(id, built);
        if (e == null) {
          e = built;
        }
      }
      return e;
    }

    /**
     * The id of {@code item} when it has entries in this horizon (its entries built on the way), else −1: an item the
     * table does not know gets no id.
     */
    int idWithEntries(String item) {
      Integer id = ids.get(item);
      if (id != null) {
        return entries(id).size() == 0 ? -1 : id;
      }
      Entries built = build(item);
      if (built.size() == 0) {
        return -1;
      }
      int given = register(item);
      Entries raced = entries.putIfAbsent(given, built);
      return (raced == null ? built : raced).size() == 0 ? -1 : given;
    }

    private Entries build(String item) {
      List<PairStats> row = table.neighbours(item, name);
      int size = Math.min(limit, row.size());
      if (size == 0) {
        return Entries.NONE;
      }
      Entries out = new Entries(size);
      for (int e = 0; e < size; e++) {
        PairStats p = row.get(e);
        boolean fwd = p.itemA().equals(item);
        PairMeasures m = p.measures();
        out.other[e] = register(fwd ? p.itemB() : p.itemA());
        out.stats[e] = p;
        out.forward[e] = fwd;
        out.confidence[e] = fwd ? m.confidenceAB() : m.confidenceBA();
        out.support[e] = m.support();
        out.bundle[e] = m.isBundle();
      }
      return out;
    }

    /** The offer screen's verdicts on item id {@code id}'s entries (the horizon's screen on first read). */
    boolean[] significant(int id) {
      OfferScreen.Horizon s = screen;
      if (s == null) {
        s = OfferScreen.of(table).horizon(name);
        screen = s;
      }
      return entries(id).significant(s);
    }

    /** The priors, computed on first read (a pass over the horizon's published item counts and a sort). */
    Priors priors() {
      Priors p = priors;
      if (p == null) {
        p = computePriors();
        priors = p;
      }
      return p;
    }

    private Priors computePriors() {
      double baskets = table.baskets(name);
      Map<String, Estimate> counts = table.items(name);
      List<Integer> published = new ArrayList<>(counts.size());
      Map<Integer, Double> logs = new HashMap<>();
      for (Map.Entry<String, Estimate> item : counts.entrySet()) {
        double support = item.getValue().value() / baskets;
        if (support > 0 && !Double.isInfinite(support)) { // false for NaN (N under the floor)
          int id = register(item.getKey());
          logs.put(id, Math.log(Math.min(1.0, support)));
          published.add(id);
        }
      }
      String[] known = names;
      double[] lnSupport = new double[ids.size()];
      Arrays.fill(lnSupport, Double.NaN);
      logs.forEach((id, value) -> lnSupport[id] = value);
      published.sort((x, y) -> {
        int byCount = Double.compare(lnSupport[y], lnSupport[x]);
        return byCount != 0 ? byCount : known[x].compareTo(known[y]);
      });
      return new Priors(lnSupport, published.stream().mapToInt(Integer::intValue).toArray());
    }
  }

  private SuggestIndex(FlooredTable table, int limit) {
    this.table = table;
    this.limit = limit;
  }

  /** The id of {@code item}, given now if it has none (ids are dense: 0, 1, 2, ...). */
  int register(String item) {
    Integer id = ids.get(item);
    if (id != null) {
      return id;
    }
    synchronized (this) {
      id = ids.get(item);
      if (id == null) {
        id = ids.size();
        String[] n = names;
        if (id == n.length) {
          n = Arrays.copyOf(n, n.length * 2);
        }
        n[id] = item;
        names = n; // published before the id is: whoever reads the id reads the name
        ids.put(item, id);
      }
      return id;
    }
  }

  /** The id of {@code item}, or null when it has none yet. */
  Integer id(String item) {
    return ids.get(item);
  }

  /** The name of an id given by {@link #register}. */
  String name(int id) {
    return names[id];
  }

  /** The index of {@code table} for {@code limit}, built on first use and shared. */
  static SuggestIndex of(FlooredTable table, int limit) {
    return table.derived(new Key(limit), t -> new SuggestIndex(t, limit));
  }

  private record Key(int limit) {}

  /** Builds every item's entries, screen and priors in every horizon the table lists (a server warms the index). */
  SuggestIndex buildAll() {
    for (String h : table.horizonNames()) {
      Horizon horizon = horizon(h);
      HorizonTable raw = table.table().horizon(h).orElseThrow();
      for (int row = 0; row < raw.rowCount(); row++) {
        for (String item : new String[] {raw.itemA(row), raw.itemB(row)}) {
          int id = horizon.idWithEntries(item);
          if (id >= 0) {
            horizon.entries(id).contributions(Measure.SHRUNK_LIFT); // the default measure, ready before a request
            horizon.significant(id);
          }
        }
      }
      horizon.priors();
    }
    return this;
  }

  /** A horizon's entries, each built on first read (null for a horizon the table does not list). */
  Horizon horizon(String name) {
    if (!table.horizonNames().contains(name)) {
      return null;
    }
    return horizons.computeIfAbsent(name, n -> new Horizon(n));
  }
}
