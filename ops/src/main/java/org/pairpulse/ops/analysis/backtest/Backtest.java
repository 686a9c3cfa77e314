package org.pairpulse.ops.analysis.backtest;

import io.micrometer.core.instrument.MeterRegistry;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import java.util.Set;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Semaphore;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicReference;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.ops.product.evaluation.NightlyRebuild;
import org.pairpulse.ops.product.evaluation.Trial;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.DriftMonitor;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.stats.MeasureSettings;
import org.pairpulse.sketch.table.PairTable;

/**
 * A replay of baskets through the production parts on event time, without a broker: the engine
 * ({@link PairEngine}), the refresh, serve's cohort floor, drift monitor and alert state machine, and the
 * test-then-train {@link Evaluator}.
 *
 * <h2>One basket at event time t</h2>
 * <ol>
 *   <li>If t reached a new refresh boundary b = ⌊t / refreshEvery⌋ · refreshEvery: the engine is advanced to b,
 *       a pair table is built (version + 1), floored, observed by the drift monitor with the alert clock at b
 *       (the boundary: dwell and cooldown run on event time), offered to the
 *       nightly rebuild, and summarised if a summary boundary was passed. A gap of several intervals without
 *       baskets gives one refresh, at the newest boundary.</li>
 *   <li>If the basket is sampled, it is evaluated against the newest table and the nightly one.</li>
 *   <li>The engine counts it.</li>
 * </ol>
 * {@link #finish} refreshes once more at the boundary after the last basket. Everything depends only on the
 * baskets and the settings, so a replay is deterministic.
 *
 * <h2>Two threads</h2>
 * A pipelined backtest ({@link #Backtest(BacktestSettings, Listener, MeterRegistry, Set, boolean)}) counts and
 * builds tables on the feeding thread and hands what only reads them (a basket's evaluation against the table it
 * would have met, the drift monitor's pass, the summaries, every listener call) to one reader thread, in the order a
 * single thread would run them. The tables are immutable and the engine is not read there, so the result is the
 * same, byte for byte ({@code ReadAheadTest}); the feeding thread may run ahead by at most
 * {@value #TASKS_AHEAD} tasks. Listeners are then called on the reader thread (one thread, in order).
 *
 * <p>Not thread-safe: one thread feeds it.
 */
public final class Backtest {
  /** Progress callbacks (all optional). */
  public interface Listener {
    /** After each refresh. */
    default void refreshed(long atMillis, PairTable table, FlooredTable floored, List<AlertEvent> events) {}

    /** After each evaluated basket. */
    default void trial(Trial trial) {}

    /**
     * After each refresh, what it cost on the replay's thread: the engine's table build ({@code PairEngine.refresh})
     * and the whole refresh step (table, cohort floor, drift monitor, nightly offer, summary).
     */
    default void refreshCost(long tableNanos, long stepNanos) {}
  }

  /** Reader tasks the feeding thread may be ahead by (each holds at most a basket or a table). */
  static final int TASKS_AHEAD = 4096;

  private final BacktestSettings settings;
  private final Listener listener;
  /** The reader thread of a pipelined backtest, or null (everything on the feeding thread). */
  private final ExecutorService reader;
  private final Semaphore ahead = new Semaphore(TASKS_AHEAD);
  private final AtomicReference<Throwable> readerFailure = new AtomicReference<>();
  private final PairEngine engine;
  private final CohortFloor floor;
  private final DriftMonitor drift;
  private final Evaluator evaluator;
  private final NightlyRebuild nightly;
  private final List<AlertEvent> alerts = new ArrayList<>();
  private final List<TableSummary> summaries = new ArrayList<>();

  private FlooredTable current;
  private long version;
  private long lastBoundary = Long.MIN_VALUE;
  private long lastSummaryPeriod = Long.MIN_VALUE;
  private long baskets;
  private long firstEventMillis = Long.MAX_VALUE;
  private long lastEventMillis = Long.MIN_VALUE;
  private boolean finished;

  /**
   * @param listener progress callbacks, or null
   * @param registry where the evaluation's meters go, or null
   */
  public Backtest(BacktestSettings settings, Listener listener, MeterRegistry registry) {
    this(settings, listener, registry, Set.of());
  }

  /**
   * @param listener progress callbacks, or null
   * @param registry where the evaluation's meters go, or null
   * @param focusPairs pairs whose trials the evaluation also reports on their own: a trial is in focus when its
   *     hidden item forms one of these pairs with a query item (the planted changes of a scenario)
   */
  public Backtest(BacktestSettings settings, Listener listener, MeterRegistry registry, Set<PairKey> focusPairs) {
    this(settings, listener, registry, focusPairs, false);
  }

  /**
   * @param pipelined whether what reads the tables runs on a reader thread of its own (see the class comment); the
   *     same result either way
   */
  public Backtest(BacktestSettings settings, Listener listener, MeterRegistry registry, Set<PairKey> focusPairs,
      boolean pipelined) {
    this.reader = pipelined ? Executors.newSingleThreadExecutor(runnable -> {
      Thread thread = new Thread(runnable, "pairpulse-backtest-reader");
      thread.setDaemon(true);
      return thread;
    }) : null;
    this.settings = Objects.requireNonNull(settings, "settings");
    this.listener = listener != null ? listener : new Listener() {};
    this.engine = new PairEngine(settings.engine());
    this.floor = settings.floor();
    this.drift = new DriftMonitor(settings.drift(), "all");
    this.current = FlooredTable.of(PairTable.empty(), floor);
    this.nightly = NightlyRebuild.daily(current);
    this.evaluator = settings.evaluation() == null ? null
        : new Evaluator(settings.evaluation(), Suggester.defaults(), this.listener::trial,
            focusPairs.isEmpty() ? null : focusTest(Set.copyOf(focusPairs)));
    if (evaluator != null && registry != null) {
      evaluator.bindTo(registry);
    }
  }

  /** A trial is in focus when its hidden item forms one of {@code pairs} with a query item. */
  private static java.util.function.Predicate<Trial> focusTest(Set<PairKey> pairs) {
    return trial -> {
      for (String item : trial.query()) {
        if (pairs.contains(PairKey.of(trial.hidden(), item))) {
          return true;
        }
      }
      return false;
    };
  }

  /** Takes the next basket of the replay. */
  public void accept(ReplayBasket basket) {
    if (finished) {
      throw new IllegalStateException("the backtest has finished");
    }
    long t = basket.eventMillis();
    long boundary = Math.floorDiv(t, settings.refreshEveryMillis()) * settings.refreshEveryMillis();
    if (boundary > lastBoundary) {
      refreshAt(boundary, true);
    }
    if (evaluator != null) {
      FlooredTable incremental = current;
      FlooredTable nightlyTable = nightly.current();
      read(() -> evaluator.evaluate(basket.id(), t, basket.items(), incremental, nightlyTable));
    }
    engine.addBasket(t, basket.items());
    baskets++;
    firstEventMillis = Math.min(firstEventMillis, t);
    lastEventMillis = Math.max(lastEventMillis, t);
  }

  private void refreshAt(long boundary, boolean offerNightly) {
    long started = System.nanoTime();
    lastBoundary = boundary;
    engine.advanceTo(boundary);
    PairTable table = engine.refresh(new PairTables.Options(++version, boundary, MeasureSettings.defaults(),
        Measure.SHRUNK_LIFT, 0.0));
    long tableNanos = System.nanoTime() - started;
    FlooredTable floored = FlooredTable.of(table, floor);
    current = floored;
    if (offerNightly) {
      nightly.offer(boundary, floored);
    }
    long summaryPeriod = Math.floorDiv(boundary, settings.summaryEveryMillis());
    boolean summarise = summaryPeriod > lastSummaryPeriod;
    if (summarise) {
      lastSummaryPeriod = summaryPeriod;
    }
    long fedNanos = System.nanoTime() - started;
    read(() -> {
      long readStarted = System.nanoTime();
      // the alert clock is the boundary: dwell and cooldown run on event time
      List<AlertEvent> events = drift.observe(floored, boundary);
      alerts.addAll(events);
      if (summarise) {
        summaries.add(TableSummary.of(floored, boundary, settings.summaryTop()));
      }
      listener.refreshCost(tableNanos, fedNanos + System.nanoTime() - readStarted);
      listener.refreshed(boundary, table, floored, events);
    });
  }

  /** Runs {@code task} on the reader thread after the tasks before it, or here when not pipelined. */
  private void read(Runnable task) {
    if (reader == null) {
      task.run();
      return;
    }
    rethrowReaderFailure();
    ahead.acquireUninterruptibly();
    reader.execute(() -> {
      try {
        if (readerFailure.get() == null) {
          task.run();
        }
      } catch (RuntimeException | Error e) {
        readerFailure.compareAndSet(null, e);
      } finally {
        ahead.release();
      }
    });
  }

  /** Waits for the reader thread's tasks (a pipelined backtest) and throws what one of them threw. */
  private void drainReader() {
    if (reader == null) {
      return;
    }
    reader.shutdown();
    try {
      while (!reader.awaitTermination(1, TimeUnit.SECONDS)) {
        // keeps waiting: the tasks are bounded
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted while the backtest's reader finished", e);
    }
    rethrowReaderFailure();
  }

  private void rethrowReaderFailure() {
    Throwable failure = readerFailure.get();
    if (failure instanceof RuntimeException e) {
      throw e;
    }
    if (failure instanceof Error e) {
      throw e;
    }
  }

  /** Refreshes at the boundary after the last basket and returns the result. */
  public BacktestResult finish() {
    if (!finished) {
      finished = true;
      if (baskets > 0) {
        long end = Math.floorDiv(lastEventMillis, settings.refreshEveryMillis()) * settings.refreshEveryMillis()
            + settings.refreshEveryMillis();
        refreshAt(end, false); // no basket follows: the nightly baseline has nothing left to answer
        drainReader();
        TableSummary last = summaries.get(summaries.size() - 1);
        if (last.atMillis() != end) {
          summaries.add(TableSummary.of(current, end, settings.summaryTop()));
        }
      } else {
        drainReader();
      }
    }
    return new BacktestResult(settings, baskets, baskets == 0 ? 0 : firstEventMillis,
        baskets == 0 ? 0 : lastEventMillis, version, nightly.rebuilds(), List.copyOf(alerts), List.copyOf(summaries),
        evaluator, engine.stats(), engine.stateBytes(), current);
  }

  public BacktestSettings settings() {
    return settings;
  }

  /** The engine (writer thread only). */
  public PairEngine engine() {
    return engine;
  }

  /** The evaluation, or null when the settings have none. */
  public Evaluator evaluator() {
    return evaluator;
  }

  /** The drift monitor. */
  public DriftMonitor drift() {
    return drift;
  }

  /** The newest floored table. */
  public FlooredTable current() {
    return current;
  }

  /** The nightly baseline's current table. */
  public NightlyRebuild nightly() {
    return nightly;
  }

  /** Baskets counted so far. */
  public long baskets() {
    return baskets;
  }
}
