package org.pairpulse.ops.product.pipeline;

import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.serve.SketchHealth;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Keeps the newest {@link SketchHealth} of an ingestor's state for serve (status, dashboard,
 * {@code /metrics}). Every interval it asks the ingestor for a merged copy of its partition engines
 * ({@link Ingestor#view()}) and captures the copy's fill and error bounds.
 *
 * <p>Cost: one merged copy of the state per interval, made on ingest's engine thread (a short pause of
 * counting, proportional to {@code stateBytes}). Ingest has no hook that hands the engine merged at
 * each refresh to the wiring; with one, this copy would go.
 */
final class SketchHealthPoller implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(SketchHealthPoller.class);

  private final Ingestor ingestor;
  private final ScheduledExecutorService thread;
  private volatile SketchHealth latest = SketchHealth.unknown();
  private volatile boolean busy;

  SketchHealthPoller(Ingestor ingestor, long intervalMillis) {
    this.ingestor = ingestor;
    this.thread = Executors.newSingleThreadScheduledExecutor(r -> {
      Thread t = new Thread(r, "pairpulse-sketch-health");
      t.setDaemon(true);
      return t;
    });
    thread.scheduleWithFixedDelay(this::poll, Math.min(intervalMillis, 1000), intervalMillis, TimeUnit.MILLISECONDS);
  }

  private void poll() {
    if (busy || !ingestor.isRunning()) {
      return;
    }
    busy = true;
    ingestor.view().whenComplete((engine, error) -> {
      busy = false;
      if (error != null) {
        LOG.debug("no sketch health this time: {}", error.toString());
      } else {
        latest = SketchHealth.capture(engine); // a private copy: safe on this thread
      }
    });
  }

  SketchHealth latest() {
    return latest;
  }

  @Override
  public void close() {
    thread.shutdownNow();
  }
}
