package org.pairpulse.ingest.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.DistributionSummary;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import java.util.EnumMap;
import java.util.Map;
import java.util.Objects;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.sketch.time.EventClock;

/**
 * The ingest meters (Micrometer). Names, units and tags:
 *
 * <table>
 *   <caption>Meters</caption>
 *   <tr><th>name</th><th>type</th><th>tags</th><th>meaning</th></tr>
 *   <tr><td>pairpulse.ingest.records</td><td>counter</td><td></td><td>records read (all, good or bad)</td></tr>
 *   <tr><td>pairpulse.ingest.baskets</td><td>counter</td><td></td><td>baskets counted by the engines</td></tr>
 *   <tr><td>pairpulse.ingest.pairs</td><td>counter</td><td></td><td>pair occurrences counted (after the per-basket cap)</td></tr>
 *   <tr><td>pairpulse.ingest.{records,baskets,pairs}.rate</td><td>gauge</td><td></td><td>per second, over the last second or more</td></tr>
 *   <tr><td>pairpulse.ingest.dead.letters</td><td>counter</td><td>reason</td><td>records sent to the dead-letter topic</td></tr>
 *   <tr><td>pairpulse.ingest.duplicates</td><td>counter</td><td>kind (basket, line_item)</td><td>re-deliveries dropped</td></tr>
 *   <tr><td>pairpulse.ingest.late</td><td>counter</td><td></td><td>events older than the watermark (also dead letters)</td></tr>
 *   <tr><td>pairpulse.ingest.lag</td><td>gauge</td><td>topic, partition</td><td>records behind the partition's end</td></tr>
 *   <tr><td>pairpulse.ingest.checkpoint.age</td><td>gauge, seconds</td><td></td><td>since the last completed checkpoint (since start before one)</td></tr>
 *   <tr><td>pairpulse.ingest.checkpoint.size</td><td>summary, bytes</td><td></td><td>bytes written per checkpoint</td></tr>
 *   <tr><td>pairpulse.ingest.checkpoint.duration</td><td>timer</td><td></td><td>time to take and write a checkpoint</td></tr>
 *   <tr><td>pairpulse.ingest.checkpoint.failures</td><td>counter</td><td></td><td>checkpoints that failed (their work is redone)</td></tr>
 *   <tr><td>pairpulse.ingest.restores</td><td>counter</td><td></td><td>partitions restored from a checkpoint</td></tr>
 *   <tr><td>pairpulse.ingest.state.bytes</td><td>gauge, bytes</td><td></td><td>engine state held by this instance (every segment)</td></tr>
 *   <tr><td>pairpulse.ingest.segment.engines</td><td>gauge</td><td></td><td>segment engines held by this instance (besides
 *       one {@code all} engine per partition)</td></tr>
 *   <tr><td>pairpulse.ingest.segment.skipped</td><td>counter</td><td>attribute, reason (over_bound, invalid_value)</td>
 *       <td>baskets whose value of a segment attribute made no segment: counted in {@code all} only</td></tr>
 * </table>
 *
 * Thread-safe: the poll loop and the engine threads (lanes) all record.
 */
public final class IngestMetrics {
  public static final String PREFIX = "pairpulse.ingest.";

  /** The refresh timer's name, shared with serve's status metrics ({@code pairpulse_refresh_duration_seconds}). */
  public static final String REFRESH_DURATION = "pairpulse.refresh.duration";

  private final MeterRegistry registry;
  private final EventClock clock;
  private final Counter records;
  private final Counter baskets;
  private final Counter pairs;
  private final Counter late;
  private final Counter basketDuplicates;
  private final Counter lineDuplicates;
  private final Counter checkpointFailures;
  private final Counter restores;
  private final Map<DeadLetterReason, Counter> deadLetters = new EnumMap<>(DeadLetterReason.class);
  private final DistributionSummary checkpointSize;
  private final Timer checkpointDuration;
  private final Timer refreshDuration;
  private final Map<String, Gauge> lagGauges = new ConcurrentHashMap<>();
  private final Map<String, AtomicLong> lags = new ConcurrentHashMap<>();
  private final PerLane stateBytes = new PerLane();
  private final PerLane segmentEngines = new PerLane();
  private final Map<String, Counter> segmentSkips = new ConcurrentHashMap<>();
  private volatile long lastCheckpointMillis;
  private final Rate recordRate;
  private final Rate basketRate;
  private final Rate pairRate;

  public IngestMetrics(MeterRegistry registry, EventClock clock) {
    this.registry = Objects.requireNonNull(registry, "registry");
    this.clock = Objects.requireNonNull(clock, "clock");
    this.lastCheckpointMillis = clock.millis();
    records = Counter.builder(PREFIX + "records").description("records read").register(registry);
    baskets = Counter.builder(PREFIX + "baskets").description("baskets counted").register(registry);
    pairs = Counter.builder(PREFIX + "pairs").description("pair occurrences counted").register(registry);
    late = Counter.builder(PREFIX + "late").description("events older than the watermark").register(registry);
    basketDuplicates = Counter.builder(PREFIX + "duplicates").tag("kind", "basket")
        .description("re-delivered baskets dropped").register(registry);
    lineDuplicates = Counter.builder(PREFIX + "duplicates").tag("kind", "line_item")
        .description("line items of already closed baskets dropped").register(registry);
    checkpointFailures = Counter.builder(PREFIX + "checkpoint.failures").register(registry);
    restores = Counter.builder(PREFIX + "restores").description("partitions restored from a checkpoint").register(registry);
    for (DeadLetterReason reason : DeadLetterReason.values()) {
      deadLetters.put(reason, Counter.builder(PREFIX + "dead.letters").tag("reason", reason.wireName())
          .description("records sent to the dead-letter topic").register(registry));
    }
    checkpointSize = DistributionSummary.builder(PREFIX + "checkpoint.size").baseUnit("bytes").register(registry);
    checkpointDuration = Timer.builder(PREFIX + "checkpoint.duration").register(registry);
    // the name serve reports as the refresh duration: ingest is the refresher when ops wires the two
    refreshDuration = Timer.builder(REFRESH_DURATION).description("Time to build and publish one pair table")
        .register(registry);
    Gauge.builder(PREFIX + "checkpoint.age", this, m -> (m.clock.millis() - m.lastCheckpointMillis) / 1000.0)
        .baseUnit("seconds").register(registry);
    Gauge.builder(PREFIX + "state.bytes", stateBytes, PerLane::sum).baseUnit("bytes").register(registry);
    Gauge.builder(PREFIX + "segment.engines", segmentEngines, PerLane::sum)
        .description("segment engines held (besides one 'all' engine per partition)").register(registry);
    recordRate = new Rate(records);
    basketRate = new Rate(baskets);
    pairRate = new Rate(pairs);
    Gauge.builder(PREFIX + "records.rate", recordRate, Rate::perSecond).baseUnit("records/s").register(registry);
    Gauge.builder(PREFIX + "baskets.rate", basketRate, Rate::perSecond).baseUnit("baskets/s").register(registry);
    Gauge.builder(PREFIX + "pairs.rate", pairRate, Rate::perSecond).baseUnit("pairs/s").register(registry);
  }

  public MeterRegistry registry() {
    return registry;
  }

  public void records(long n) {
    records.increment(n);
  }

  public void counted(long basketCount, long pairCount) {
    baskets.increment(basketCount);
    pairs.increment(pairCount);
  }

  public void deadLetter(DeadLetterReason reason) {
    deadLetters.get(reason).increment();
    if (reason == DeadLetterReason.LATE) {
      late.increment();
    }
  }

  public void duplicate(boolean lineItem) {
    (lineItem ? lineDuplicates : basketDuplicates).increment();
  }

  public void restored() {
    restores.increment();
  }

  /** One refresh (merge of the partitions' engines per segment and the pair tables) took {@code nanos}. */
  public void refreshed(long nanos) {
    refreshDuration.record(nanos, TimeUnit.NANOSECONDS);
  }

  public void checkpointed(long bytes, long nanos) {
    checkpointSize.record(bytes);
    checkpointDuration.record(nanos, TimeUnit.NANOSECONDS);
    lastCheckpointMillis = clock.millis();
  }

  public void checkpointFailed() {
    checkpointFailures.increment();
  }

  /** The state bytes of the engines of engine lane {@code lane} (the gauge reports the sum over lanes). */
  public void stateBytes(int lane, long bytes) {
    stateBytes.set(lane, bytes);
  }

  /** The segment engines of engine lane {@code lane} (the gauge reports the sum over lanes). */
  public void segmentEngines(int lane, long count) {
    segmentEngines.set(lane, count);
  }

  /** A basket whose value of {@code attribute} made no segment ({@code reason}: over_bound, invalid_value). */
  public void segmentSkipped(String attribute, String reason) {
    segmentSkipCounter(attribute, reason).increment();
  }

  /**
   * Registers the skip counters of a configured segment attribute at zero, for every reason, so that
   * dashboards and alert rules see the series before the first skip.
   */
  public void segmentAttribute(String attribute) {
    for (SegmentEngines.Skip reason : SegmentEngines.Skip.values()) {
      segmentSkipCounter(attribute, reason.wireName());
    }
  }

  private Counter segmentSkipCounter(String attribute, String reason) {
    return segmentSkips.computeIfAbsent(attribute + " " + reason, k -> Counter.builder(PREFIX + "segment.skipped")
        .tags(Tags.of("attribute", attribute, "reason", reason))
        .description("baskets whose segment attribute value made no segment (counted in 'all' only)")
        .register(registry));
  }

  /** Baskets whose value of {@code attribute} made no segment for {@code reason} so far. */
  public double segmentSkippedCount(String attribute, String reason) {
    Counter counter = segmentSkips.get(attribute + " " + reason);
    return counter == null ? 0 : counter.count();
  }

  /** Sets the lag of one partition (registering its gauge on first use). */
  public void lag(String topic, int partition, long records) {
    String key = topic + "-" + partition;
    lags.computeIfAbsent(key, k -> {
      AtomicLong value = new AtomicLong();
      lagGauges.put(k, Gauge.builder(PREFIX + "lag", value, AtomicLong::get)
          .tags(Tags.of("topic", topic, "partition", Integer.toString(partition))).baseUnit("records").register(registry));
      return value;
    }).set(records);
  }

  /** Removes the lag gauge of a partition this instance no longer owns. */
  public void forgetPartition(String topic, int partition) {
    String key = topic + "-" + partition;
    Gauge gauge = lagGauges.remove(key);
    lags.remove(key);
    if (gauge != null) {
      registry.remove(gauge);
    }
  }

  /** Updates the per-second gauges; call about once a second. */
  public void tick() {
    long now = clock.millis();
    recordRate.update(now);
    basketRate.update(now);
    pairRate.update(now);
  }

  public double deadLetterCount(DeadLetterReason reason) {
    return deadLetters.get(reason).count();
  }

  public double duplicateCount() {
    return basketDuplicates.count() + lineDuplicates.count();
  }

  public double lateCount() {
    return late.count();
  }

  public double restoreCount() {
    return restores.count();
  }

  public double basketCount() {
    return baskets.count();
  }

  public double recordCount() {
    return records.count();
  }

  public long checkpointCount() {
    return checkpointDuration.count();
  }

  /** Checkpoint transactions that failed to commit (each one rewinds the instance's partitions). */
  public double checkpointFailureCount() {
    return checkpointFailures.count();
  }

  /**
   * A gauge's value kept per engine lane, reported as the sum: each lane sets only its own value, so lanes never
   * overwrite each other's totals.
   */
  private static final class PerLane {
    private final Map<Integer, Long> values = new ConcurrentHashMap<>();

    void set(int lane, long value) {
      values.put(lane, value);
    }

    double sum() {
      return values.values().stream().mapToLong(Long::longValue).sum();
    }
  }

  /** A per-second rate of a counter, over the interval between two updates. */
  private static final class Rate {
    private final Counter counter;
    private double lastCount;
    private long lastMillis = Long.MIN_VALUE;
    private volatile double perSecond;

    Rate(Counter counter) {
      this.counter = counter;
    }

    synchronized void update(long nowMillis) {
      double count = counter.count();
      if (lastMillis != Long.MIN_VALUE && nowMillis > lastMillis) {
        perSecond = (count - lastCount) * 1000.0 / (nowMillis - lastMillis);
      }
      lastCount = count;
      lastMillis = nowMillis;
    }

    double perSecond() {
      return perSecond;
    }
  }
}
