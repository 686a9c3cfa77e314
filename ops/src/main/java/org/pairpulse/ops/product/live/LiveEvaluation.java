package org.pairpulse.ops.product.live;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.time.Duration;
import java.util.List;
import java.util.Objects;
import java.util.Optional;
import java.util.function.BooleanSupplier;
import java.util.function.Consumer;
import java.util.function.Supplier;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.ops.product.evaluation.NightlyRebuild;
import org.pairpulse.ops.product.evaluation.Trial;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The test-then-train evaluation on a live stream: the {@link Evaluator} of backtests, fed from ingest's own path
 * while ingest counts the stream, so that the dashboard and {@code /metrics} show how well the served table
 * predicts baskets it has not counted yet.
 *
 * <h2>How a basket is tested before it trains</h2>
 * The evaluation is a tap on ingest ({@link #tap()}, given to {@code Ingestor.basketTap}): ingest's one consumer
 * reads the basket topics, its decoder and partition fronts validate, dedupe and assemble the baskets, and each
 * basket a front lets through reaches the tap on ingest's poll thread before the engine counts it. There is no
 * consumer of its own. The tap samples baskets by id with the evaluator's own rule and tests each sampled one
 * against the table the server publishes at that moment. The table holds a basket only after ingest counted it and
 * a refresh followed; so a basket whose event time is later than the table's watermark cannot be in it yet, and is
 * tested. One at or before the watermark may already be counted (a replay after a restart, or a late event): it is
 * skipped and counted as such ({@code pairpulse.evaluation.skipped{reason="counted"}}), never tested on data that
 * holds it. Records that do not decode never reach the tap (ingest sends them to the dead-letter topic with their
 * reason).
 *
 * <p>The nightly baseline freezes the first table offered in each UTC day of event time; the popular baseline
 * comes from the same table.
 *
 * <h2>Scale-out</h2>
 * The tap tests baskets only while {@code active} says so: always on a single node; in group mode while the
 * instance leads the group's alerts, against the group view it serves. One evaluator per group, then, on a sample
 * of the group's traffic (the leader's partitions; records are spread over partitions by basket id).
 *
 * <h2>Threads and failures</h2>
 * {@link #tap()} runs on ingest's poll thread and costs one hash per basket plus, for the sampled share, one
 * suggestion request against the served table. A failure while testing stops the evaluation (see
 * {@link #failure()}), never ingest: later baskets pass the tap untested.
 *
 * <p>The {@linkplain #summary() summary} the dashboard shows adds every method's scores and their hourly course
 * (event time, the newest {@value #KEEP_PERIODS} hours), kept in fixed memory.
 *
 * <p>Metrics: those of {@link Evaluator#bindTo} plus {@code pairpulse.evaluation.skipped{reason}} with reasons
 * {@code counted} and {@code no_table}.
 */
public final class LiveEvaluation implements EvaluationStatus {
  private static final Logger LOG = LoggerFactory.getLogger(LiveEvaluation.class);
  /** The dashboard's series: hourly periods of event time, the newest two days of them. */
  static final Duration PERIOD = Duration.ofHours(1);
  static final int KEEP_PERIODS = 48;

  private final Supplier<FlooredTable> served;
  private final BooleanSupplier active;
  private final Evaluator evaluator;
  private NightlyRebuild nightly; // made with the first table: the server may not exist when this is built
  private final PeriodScores scores;
  private final Counter skippedCounted;
  private final Counter skippedNoTable;
  private volatile Throwable failure;

  private LiveEvaluation(EvaluationSettings settings, Supplier<FlooredTable> served, MeterRegistry registry,
      BooleanSupplier active, Consumer<Trial> listener) {
    this.served = Objects.requireNonNull(served, "served");
    this.active = Objects.requireNonNull(active, "active");
    Objects.requireNonNull(listener, "listener");
    this.scores = new PeriodScores(settings.k(), PERIOD.toMillis(), KEEP_PERIODS);
    this.evaluator = Evaluator.withoutLog(settings, Suggester.defaults(), trial -> { // fixed memory
      scores.add(trial);
      listener.accept(trial);
    });
    evaluator.bindTo(registry);
    this.skippedCounted = skipped(registry, "counted");
    this.skippedNoTable = skipped(registry, "no_table");
  }

  /**
   * The evaluation of one instance, fed by its ingest ({@link #tap()} given to {@code Ingestor.basketTap}): it tests
   * the baskets of this instance's partitions while {@code active} says so.
   *
   * @param settings what to evaluate (share, k, horizon, ...)
   * @param served the table the server publishes now (segment {@code all}, floored as served); first asked on
   *     ingest's poll thread, once ingest runs
   * @param registry where the evaluation's meters go
   * @param active whether to test now: {@code () -> true} on a single node, "leads the group's alerts" in group mode
   * @param listener told of every trial, on ingest's poll thread
   */
  public static LiveEvaluation onIngestPath(EvaluationSettings settings, Supplier<FlooredTable> served,
      MeterRegistry registry, BooleanSupplier active, Consumer<Trial> listener) {
    return new LiveEvaluation(settings, served, registry, active, listener);
  }

  /** {@link #onIngestPath(EvaluationSettings, Supplier, MeterRegistry, BooleanSupplier, Consumer)} with no listener. */
  public static LiveEvaluation onIngestPath(EvaluationSettings settings, Supplier<FlooredTable> served,
      MeterRegistry registry, BooleanSupplier active) {
    return onIngestPath(settings, served, registry, active, trial -> { });
  }

  /** Where ingest hands every basket its fronts let through, before counting it (on ingest's poll thread). */
  public BasketSink tap() {
    return (basketId, eventMillis, items) -> {
      if (failure == null && active.getAsBoolean()) {
        try {
          test(basketId, eventMillis, items);
        } catch (RuntimeException e) {
          failure = e;
          LOG.error("live evaluation stopped (ingest goes on): {}", e.toString(), e);
        }
      }
    };
  }

  private static Counter skipped(MeterRegistry registry, String reason) {
    return Counter.builder("pairpulse.evaluation.skipped")
        .description("Sampled baskets of the live evaluation not tested, by reason").tag("reason", reason)
        .register(registry);
  }

  /** The running evaluation (totals only: a live evaluation keeps no log of trials). */
  public Evaluator evaluator() {
    return evaluator;
  }

  /** Tested baskets so far. */
  public long trials() {
    return evaluator.trials();
  }

  /** What stopped the evaluation, or null while it runs. */
  public Throwable failure() {
    return failure;
  }

  /** The served table's scores (as the evaluator reports them) with every method's and the hourly series. */
  @Override
  public Optional<Summary> summary() {
    return evaluator.summary().map(s -> new Summary(s.baskets(), s.k(), s.hitRate(), s.meanReciprocalRank(),
        s.horizon(), scores.methods(), scores.series()));
  }

  /** Tests one assembled basket against the served table, if that table cannot hold it yet. */
  void test(String basketId, long eventMillis, List<String> items) {
    if (!evaluator.sampled(basketId)) {
      return;
    }
    FlooredTable table = served.get();
    if (table.version() == 0) {
      skippedNoTable.increment();
      return;
    }
    if (table.table().watermarkMillis() >= eventMillis) {
      skippedCounted.increment();
      return;
    }
    if (nightly == null) {
      nightly = NightlyRebuild.daily(table);
    }
    nightly.offer(eventMillis, table);
    evaluator.evaluate(basketId, eventMillis, items, table, nightly.current());
  }
}
