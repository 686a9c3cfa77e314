package org.pairpulse.ops.product.evaluation;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.function.Consumer;
import java.util.function.Predicate;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.suggest.Suggestion;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.serve.suggest.SuggestionResult;
import org.pairpulse.sketch.stats.Estimate;

/**
 * Test-then-train evaluation: a sampled basket is tested <em>before</em> it updates the state. One of its
 * items is hidden, the rest ask for suggestions, and the hidden item's rank is recorded for three
 * {@linkplain EvaluationMethod methods} in the same pass: the incremental pair table, a nightly one, and the
 * most popular items.
 *
 * <h2>Which baskets, which item</h2>
 * A basket takes part when it has at least 2 distinct items and {@code u(id) < share}, where {@code u} is a
 * uniform number in [0, 1) made from the basket id and the seed: 64-bit FNV-1a over the id's UTF-16 code units,
 * xor the seed, then SplitMix64's finaliser; the top 53 bits give {@code u}. The hidden item is the
 * {@code (h' mod n)}-th of the basket's n distinct items in sorted order, with {@code h'} the finaliser applied
 * once more. So the same baskets and items are chosen in every run, whatever the order of the file.
 *
 * <h2>Scores</h2>
 * Rank r of the hidden item (1 = first) among the k answers, 0 when absent. hit@c is the share of trials with
 * 1 ≤ r ≤ c; the mean reciprocal rank averages 1/r (0 for a miss), so it is MRR@k. Reported over all trials,
 * per UTC day of the baskets' event time, and over any interval ({@link #tally}).
 *
 * <h2>Metrics</h2>
 * {@link #bindTo} registers {@code pairpulse.evaluation.trials} (counter), {@code pairpulse.evaluation.hit.rate}
 * (gauge, tags {@code method}, {@code k}) and {@code pairpulse.evaluation.reciprocal.rank} (gauge, tag
 * {@code method}), all over every trial so far. {@link #summary()} is serve's {@link EvaluationStatus} view
 * (incremental method, hit rate at k).
 *
 * <p>Threading: one writer calls {@link #evaluate}; {@link #summary()} and the gauges may be read from any
 * thread (they read a volatile snapshot).
 */
public final class Evaluator implements EvaluationStatus {
  static final long DAY_MILLIS = Duration.ofDays(1).toMillis();

  private final EvaluationSettings settings;
  private final Suggester suggester;
  private final int[] cutoffs;
  private final Consumer<Trial> listener;
  private final Predicate<Trial> focus;
  /** False for a live evaluation: totals only, no per-trial log (it would grow for as long as the process runs). */
  private final boolean keepLog;

  // the trial log: event time and the rank of each method (0..k fits a byte for k <= 100)
  private long[] times = new long[1024];
  private final byte[][] ranks = new byte[EvaluationMethod.values().length][1024];
  private boolean[] focused = new boolean[1024];
  private int size;

  private long popularVersion = -1;
  private FlooredTable popularTable;
  private List<String> popularOrder = List.of();

  private volatile Totals totals;
  private Counter trialCounter;

  /** Running totals over all trials, for readers on other threads. */
  private record Totals(long trials, long[][] hits, double[] reciprocalRankSums) {}

  /**
   * @param listener receives every trial (for tests and logs); may be null
   */
  public Evaluator(EvaluationSettings settings, Suggester suggester, Consumer<Trial> listener) {
    this(settings, suggester, listener, null);
  }

  /**
   * @param listener receives every trial (for tests and logs); may be null
   * @param focus marks the trials of a subset that {@link #tally(EvaluationMethod, long, long, boolean)} can
   *     report on its own (for instance: the hidden item forms a planted pair with a query item); may be null
   */
  public Evaluator(EvaluationSettings settings, Suggester suggester, Consumer<Trial> listener, Predicate<Trial> focus) {
    this(settings, suggester, listener, focus, true);
  }

  /**
   * An evaluator in fixed memory, for a live stream that runs for months: it keeps the running totals
   * ({@link #summary()}, the metrics, {@link #trials()}) but no log of trials, so the tallies over intervals and
   * days are not available (they throw {@link IllegalStateException}). The listener sees every trial.
   */
  public static Evaluator withoutLog(EvaluationSettings settings, Suggester suggester, Consumer<Trial> listener) {
    return new Evaluator(settings, suggester, listener, null, false);
  }

  private Evaluator(EvaluationSettings settings, Suggester suggester, Consumer<Trial> listener, Predicate<Trial> focus,
      boolean keepLog) {
    this.keepLog = keepLog;
    this.settings = Objects.requireNonNull(settings, "settings");
    this.suggester = Objects.requireNonNull(suggester, "suggester");
    this.cutoffs = settings.cutoffs();
    this.listener = listener;
    this.focus = focus;
    int methods = EvaluationMethod.values().length;
    this.totals = new Totals(0, new long[methods][cutoffs.length], new double[methods]);
  }

  public EvaluationSettings settings() {
    return settings;
  }

  /** The cut-offs hit rates are reported at (1, 5, k). */
  public int[] cutoffs() {
    return cutoffs.clone();
  }

  /** Whether the basket with this id is in the sample (before the 2-item rule). */
  public boolean sampled(String basketId) {
    return uniform(idHash(basketId, settings.seed())) < settings.share();
  }

  /**
   * Tests one basket before it trains the state.
   *
   * @param incremental the newest pair table (floored as served)
   * @param nightly the table of the nightly rebuild
   * @return the trial, or empty when the basket is not sampled or has fewer than 2 distinct items
   */
  public Optional<Trial> evaluate(String basketId, long eventMillis, List<String> items, FlooredTable incremental,
      FlooredTable nightly) {
    long hash = idHash(basketId, settings.seed());
    if (!(uniform(hash) < settings.share())) {
      return Optional.empty();
    }
    TreeSet<String> distinct = new TreeSet<>();
    for (String item : items) {
      if (item != null && !item.isEmpty()) {
        distinct.add(item);
      }
    }
    if (distinct.size() < 2) {
      return Optional.empty();
    }
    List<String> sorted = new ArrayList<>(distinct);
    String hidden = sorted.get((int) Long.remainderUnsigned(mix(hash), sorted.size()));
    List<String> query = new ArrayList<>(sorted);
    query.remove(hidden);
    SuggestionRequest request = settings.request(query);
    int incrementalRank = rankOf(hidden, suggester.suggest(incremental, request));
    int nightlyRank = rankOf(hidden, suggester.suggest(nightly, request));
    int popularRank = popularRank(hidden, distinct, incremental);
    Trial trial = new Trial(basketId, eventMillis, hidden, query, incrementalRank, nightlyRank, popularRank,
        incremental.version(), nightly.version());
    record(trial);
    if (listener != null) {
      listener.accept(trial);
    }
    return Optional.of(trial);
  }

  private static int rankOf(String hidden, SuggestionResult result) {
    List<Suggestion> suggestions = result.suggestions();
    for (int i = 0; i < suggestions.size(); i++) {
      if (suggestions.get(i).item().equals(hidden)) {
        return i + 1;
      }
    }
    return 0;
  }

  /** Rank of {@code hidden} among the k most frequent items of the table that are not in the query. */
  private int popularRank(String hidden, TreeSet<String> basket, FlooredTable table) {
    if (table != popularTable || table.version() != popularVersion) {
      popularTable = table;
      popularVersion = table.version();
      popularOrder = popularOrder(table, settings.horizon(), Integer.MAX_VALUE);
    }
    int rank = 0;
    for (String item : popularOrder) {
      if (basket.contains(item) && !item.equals(hidden)) {
        continue; // a query item
      }
      rank++;
      if (item.equals(hidden)) {
        return rank;
      }
      if (rank == settings.k()) {
        return 0;
      }
    }
    return 0;
  }

  /** The {@code limit} most frequent published items of a horizon: n_a descending, then id. */
  static List<String> popularOrder(FlooredTable table, String horizon, int limit) {
    List<Map.Entry<String, Estimate>> items = new ArrayList<>(table.items(horizon).entrySet());
    items.sort(Comparator.comparingDouble((Map.Entry<String, Estimate> e) -> -e.getValue().value())
        .thenComparing(Map.Entry::getKey));
    List<String> order = new ArrayList<>(Math.min(limit, items.size()));
    for (int i = 0; i < items.size() && i < limit; i++) {
      order.add(items.get(i).getKey());
    }
    return order;
  }

  private void record(Trial trial) {
    if (keepLog) {
      log(trial);
    }
    Totals old = totals;
    long[][] hits = new long[old.hits().length][];
    double[] rr = old.reciprocalRankSums().clone();
    for (EvaluationMethod method : EvaluationMethod.values()) {
      int m = method.ordinal();
      int rank = trial.rank(method);
      hits[m] = old.hits()[m].clone();
      if (rank > 0) {
        rr[m] += 1.0 / rank;
        for (int c = 0; c < cutoffs.length; c++) {
          if (rank <= cutoffs[c]) {
            hits[m][c]++;
          }
        }
      }
    }
    totals = new Totals(old.trials() + 1, hits, rr);
    if (trialCounter != null) {
      trialCounter.increment();
    }
  }

  private void log(Trial trial) {
    if (size == times.length) {
      times = Arrays.copyOf(times, size * 2);
      focused = Arrays.copyOf(focused, size * 2);
      for (int m = 0; m < ranks.length; m++) {
        ranks[m] = Arrays.copyOf(ranks[m], size * 2);
      }
    }
    times[size] = trial.eventMillis();
    focused[size] = focus != null && focus.test(trial);
    for (EvaluationMethod method : EvaluationMethod.values()) {
      ranks[method.ordinal()][size] = (byte) trial.rank(method);
    }
    size++;
  }

  private void requireLog() {
    if (!keepLog) {
      throw new IllegalStateException("this evaluator keeps no trial log (a live evaluation): only its totals");
    }
  }

  /** Trials so far. */
  public long trials() {
    return totals.trials();
  }

  /** The tally of one method over the trials whose event time lies in [fromMillis, toMillis). */
  public Tally tally(EvaluationMethod method, long fromMillis, long toMillis) {
    return tally(method, fromMillis, toMillis, false);
  }

  /** As {@link #tally(EvaluationMethod, long, long)}, over the focus trials only when {@code focusOnly}. */
  public Tally tally(EvaluationMethod method, long fromMillis, long toMillis, boolean focusOnly) {
    requireLog();
    byte[] methodRanks = ranks[method.ordinal()];
    byte[] selected = new byte[size];
    int n = 0;
    for (int i = 0; i < size; i++) {
      if (times[i] >= fromMillis && times[i] < toMillis && (!focusOnly || focused[i])) {
        selected[n++] = methodRanks[i];
      }
    }
    return Tally.of(cutoffs, selected, 0, n);
  }

  /**
   * The tally of one method over the trials whose event time satisfies {@code when} (for instance a union of
   * intervals), the focus trials only when {@code focusOnly}.
   */
  public Tally tally(EvaluationMethod method, java.util.function.LongPredicate when, boolean focusOnly) {
    requireLog();
    byte[] methodRanks = ranks[method.ordinal()];
    byte[] selected = new byte[size];
    int n = 0;
    for (int i = 0; i < size; i++) {
      if (when.test(times[i]) && (!focusOnly || focused[i])) {
        selected[n++] = methodRanks[i];
      }
    }
    return Tally.of(cutoffs, selected, 0, n);
  }

  /** Every method's tally over the trials whose event time satisfies {@code when}. */
  public Map<EvaluationMethod, Tally> tallies(java.util.function.LongPredicate when, boolean focusOnly) {
    Map<EvaluationMethod, Tally> map = new EnumMap<>(EvaluationMethod.class);
    for (EvaluationMethod method : EvaluationMethod.values()) {
      map.put(method, tally(method, when, focusOnly));
    }
    return map;
  }

  /** The tally of one method over every trial. */
  public Tally tally(EvaluationMethod method) {
    requireLog();
    return Tally.of(cutoffs, ranks[method.ordinal()], 0, size);
  }

  /** Every method's tally over [fromMillis, toMillis). */
  public Map<EvaluationMethod, Tally> tallies(long fromMillis, long toMillis) {
    return tallies(fromMillis, toMillis, false);
  }

  /** Every method's tally over [fromMillis, toMillis), the focus trials only when {@code focusOnly}. */
  public Map<EvaluationMethod, Tally> tallies(long fromMillis, long toMillis, boolean focusOnly) {
    Map<EvaluationMethod, Tally> map = new EnumMap<>(EvaluationMethod.class);
    for (EvaluationMethod method : EvaluationMethod.values()) {
      map.put(method, tally(method, fromMillis, toMillis, focusOnly));
    }
    return map;
  }

  /** Whether the evaluator marks focus trials. */
  public boolean hasFocus() {
    return focus != null;
  }

  /** The UTC days (start of day, epoch millis) that hold trials, ascending. */
  public List<Long> days() {
    requireLog();
    TreeMap<Long, Boolean> days = new TreeMap<>();
    for (int i = 0; i < size; i++) {
      days.put(Math.floorDiv(times[i], DAY_MILLIS) * DAY_MILLIS, Boolean.TRUE);
    }
    return new ArrayList<>(days.keySet());
  }

  @Override
  public Optional<Summary> summary() {
    Totals now = totals;
    if (now.trials() == 0) {
      return Optional.empty();
    }
    int m = EvaluationMethod.INCREMENTAL.ordinal();
    return Optional.of(new Summary(now.trials(), settings.k(), (double) now.hits()[m][cutoffs.length - 1] / now.trials(),
        now.reciprocalRankSums()[m] / now.trials(), settings.horizon()));
  }

  /** Registers the evaluation's meters (see the class comment). */
  public void bindTo(MeterRegistry registry) {
    trialCounter = Counter.builder("pairpulse.evaluation.trials")
        .description("Baskets evaluated by test-then-train (one item hidden, the rest asked)").register(registry);
    trialCounter.increment(totals.trials());
    for (EvaluationMethod method : EvaluationMethod.values()) {
      int m = method.ordinal();
      for (int c = 0; c < cutoffs.length; c++) {
        int cutoff = c;
        Gauge.builder("pairpulse.evaluation.hit.rate", this, e -> e.rate(m, cutoff))
            .tag("method", method.wireName()).tag("k", Integer.toString(cutoffs[c]))
            .description("Share of evaluated baskets whose hidden item was among the top k").register(registry);
      }
      Gauge.builder("pairpulse.evaluation.reciprocal.rank", this, e -> e.meanRr(m)).tag("method", method.wireName())
          .description("Mean reciprocal rank of the hidden item (0 when missed)").register(registry);
    }
  }

  private double rate(int method, int cutoff) {
    Totals now = totals;
    return now.trials() == 0 ? Double.NaN : (double) now.hits()[method][cutoff] / now.trials();
  }

  private double meanRr(int method) {
    Totals now = totals;
    return now.trials() == 0 ? Double.NaN : now.reciprocalRankSums()[method] / now.trials();
  }

  // ---------------------------------------------------------------- hashing

  /** FNV-1a over the UTF-16 code units, xor the seed, then the SplitMix64 finaliser. */
  static long idHash(String id, long seed) {
    long h = 0xcbf29ce484222325L;
    for (int i = 0; i < id.length(); i++) {
      h ^= id.charAt(i);
      h *= 0x100000001b3L;
    }
    return mix(h ^ seed);
  }

  /** SplitMix64's finaliser (Steele, Lea, Flood 2014): a bijection that spreads every input bit. */
  static long mix(long z) {
    z = (z ^ (z >>> 30)) * 0xbf58476d1ce4e5b9L;
    z = (z ^ (z >>> 27)) * 0x94d049bb133111ebL;
    return z ^ (z >>> 31);
  }

  /** The top 53 bits as a double in [0, 1). */
  static double uniform(long hash) {
    return (hash >>> 11) * 0x1.0p-53;
  }
}
