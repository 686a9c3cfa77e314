package org.pairpulse.ops.product.pipeline;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.Map;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.IngestStatus;
import org.pairpulse.sketch.table.PairTable;

/**
 * serve's view of ingest ({@link IngestStatus}) over an {@link Ingestor}: counts and rates from its
 * meters, the watermark from its newest pair table. Reads only volatile state and meters, so it never
 * blocks serve's threads.
 */
final class IngestHealthReporter implements IngestStatus {
  private final Ingestor ingestor;
  private final MeterRegistry registry;
  private volatile boolean started;
  private volatile boolean stopped;

  IngestHealthReporter(Ingestor ingestor, MeterRegistry registry) {
    this.ingestor = ingestor;
    this.registry = registry;
  }

  void started() {
    started = true;
  }

  void stopped() {
    stopped = true;
  }

  @Override
  public IngestHealth health() {
    IngestMetrics metrics = ingestor.metrics();
    Throwable failure = ingestor.failure();
    IngestHealth.State state;
    String detail = "";
    if (failure != null) {
      state = IngestHealth.State.FAILED;
      detail = failure.getMessage() == null ? failure.getClass().getSimpleName() : failure.getMessage();
    } else if (stopped || (started && !ingestor.isRunning())) {
      state = IngestHealth.State.STOPPED;
    } else if (!started) {
      state = IngestHealth.State.STARTING;
    } else {
      state = IngestHealth.State.RUNNING;
      detail = "partitions " + ingestor.assignment().size() + ", instance " + ingestor.instanceId();
    }
    Map<String, Long> deadLetters = new LinkedHashMap<>();
    for (DeadLetterReason reason : DeadLetterReason.values()) {
      long count = (long) metrics.deadLetterCount(reason);
      if (count > 0) {
        deadLetters.put(reason.wireName(), count);
      }
    }
    PairTable table = ingestor.pairTables().current();
    long watermark = table.version() == 0 ? Long.MIN_VALUE : table.watermarkMillis();
    return new IngestHealth(state, (long) metrics.basketCount(), gauge(IngestMetrics.PREFIX + "baskets.rate"),
        gauge(IngestMetrics.PREFIX + "records.rate"), lag(), deadLetters, watermark, detail);
  }

  private double gauge(String name) {
    Gauge gauge = registry.find(name).gauge();
    return gauge == null ? 0 : gauge.value();
  }

  /** Summed over this instance's partitions; −1 before any partition reported one. */
  private long lag() {
    Collection<Gauge> gauges = registry.find(IngestMetrics.PREFIX + "lag").gauges();
    if (gauges.isEmpty()) {
      return -1;
    }
    long sum = 0;
    for (Gauge g : gauges) {
      sum += (long) g.value();
    }
    return sum;
  }
}
