package org.pairpulse.serve.alerts;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.util.List;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.LinkedBlockingQueue;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import org.pairpulse.serve.drift.AlertEvent;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Records alert events (history, {@code pairpulse_alerts_total}) and hands them to the sinks on a
 * thread of its own, so that a slow sink never delays the table watcher, ingest or requests. The
 * queue is bounded (10,000 events); beyond it events are still recorded in the history but not sent.
 */
public final class AlertDispatcher implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(AlertDispatcher.class);

  private final AlertHistory history;
  private final List<AlertSink> sinks;
  private final MeterRegistry registry;
  private final ExecutorService thread;

  public AlertDispatcher(AlertHistory history, List<AlertSink> sinks, MeterRegistry registry) {
    this.history = history;
    this.sinks = List.copyOf(sinks);
    this.registry = registry;
    this.thread = new ThreadPoolExecutor(1, 1, 0, TimeUnit.MILLISECONDS, new LinkedBlockingQueue<>(10_000), r -> {
      Thread t = new Thread(r, "pairpulse-alerts");
      t.setDaemon(true);
      return t;
    });
  }

  /** Records the events now and sends them asynchronously, in order. */
  public void dispatch(List<AlertEvent> events) {
    for (AlertEvent event : events) {
      history.add(event);
      Counter.builder("pairpulse.alerts").description("Alert events by kind and transition")
          .tag("kind", event.kind().wireName()).tag("transition", event.transition().wireName())
          .register(registry).increment();
      LOG.info("alert {} {} {} in segment {} ({})", event.kind().wireName(), event.transition().wireName(), event.pair(),
          event.segment(), event.id());
      if (sinks.isEmpty()) {
        continue;
      }
      try {
        thread.execute(() -> send(event));
      } catch (RejectedExecutionException e) {
        LOG.warn("alert queue full or closed: alert {} not sent", event.id());
      }
    }
  }

  private void send(AlertEvent event) {
    byte[] cloudEvent = CloudEvents.json(event);
    for (AlertSink sink : sinks) {
      try {
        sink.publish(event, cloudEvent);
      } catch (RuntimeException e) {
        LOG.warn("alert sink {} failed on {}: {}", sink.name(), event.id(), e.toString());
      }
    }
  }

  /** Waits until every event dispatched so far was handed to the sinks (tests, shutdown). */
  public void drain() throws InterruptedException {
    java.util.concurrent.CountDownLatch done = new java.util.concurrent.CountDownLatch(1);
    try {
      thread.execute(done::countDown);
    } catch (RejectedExecutionException e) {
      return;
    }
    done.await(30, TimeUnit.SECONDS);
  }

  @Override
  public void close() {
    thread.shutdown();
    try {
      thread.awaitTermination(5, TimeUnit.SECONDS);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
    for (AlertSink sink : sinks) {
      try {
        sink.close();
      } catch (RuntimeException e) {
        LOG.warn("closing alert sink {}: {}", sink.name(), e.toString());
      }
    }
  }
}
