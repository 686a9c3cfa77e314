package org.pairpulse.serve.alerts;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.sun.net.httpserver.HttpServer;
import io.cloudevents.CloudEvent;
import io.cloudevents.core.format.EventFormat;
import io.cloudevents.core.provider.EventFormatProvider;
import io.cloudevents.jackson.JsonFormat;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.IOException;
import java.io.InputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.IntSupplier;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.AlertKind;
import org.pairpulse.serve.drift.AlertTransition;
import org.pairpulse.serve.drift.DriftChange;
import org.pairpulse.serve.drift.DriftFinding;
import org.pairpulse.serve.floor.PairKey;

/** Webhook delivery against a local JDK HttpServer: retries, backoff, give-up, never blocking. */
class WebhookAlertSinkTest {
  private HttpServer receiver;
  private WebhookAlertSink sink;
  private final SimpleMeterRegistry registry = new SimpleMeterRegistry();
  private final List<Long> arrivalsNanos = new CopyOnWriteArrayList<>();
  private final List<byte[]> bodies = new CopyOnWriteArrayList<>();
  private final List<String> contentTypes = new CopyOnWriteArrayList<>();

  private static final AlertEvent EVENT = AlertEvent.of(AlertKind.EMERGING, AlertTransition.RAISED, "all",
      PairKey.of("pack-esports", "boost-lowlat"), 1_772_409_600_000L, 1_772_408_700_000L, 7,
      new DriftFinding(PairKey.of("pack-esports", "boost-lowlat"), 6.2, 5.6e-10, 6.2, 5.4, 4.1, 5.3, false, 6.1, 1.2,
          5.08, 44, 180, 900, 22_000, 4.2, 0.9, 12.5, 1.1, 0.41, 0.05, false, false, 1_772_300_000_000L, 21_600_000L),
      DriftChange.BOTH);

  /** Starts a receiver answering with {@code statuses} (the last repeats), after {@code delayMillis}. */
  private URI receiver(IntSupplier status, long delayMillis) throws IOException {
    receiver = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    receiver.setExecutor(Executors.newFixedThreadPool(4));
    receiver.createContext("/hook", exchange -> {
      arrivalsNanos.add(System.nanoTime());
      try (InputStream in = exchange.getRequestBody()) {
        bodies.add(in.readAllBytes());
      }
      contentTypes.add(exchange.getRequestHeaders().getFirst("Content-Type"));
      if (delayMillis > 0) {
        try {
          Thread.sleep(delayMillis);
        } catch (InterruptedException e) {
          Thread.currentThread().interrupt();
        }
      }
      exchange.sendResponseHeaders(status.getAsInt(), -1);
      exchange.close();
    });
    receiver.start();
    return URI.create("http://127.0.0.1:" + receiver.getAddress().getPort() + "/hook");
  }

  private static IntSupplier sequence(int... statuses) {
    AtomicInteger n = new AtomicInteger();
    return () -> statuses[Math.min(n.getAndIncrement(), statuses.length - 1)];
  }

  @AfterEach
  void stop() {
    if (sink != null) {
      sink.close();
    }
    if (receiver != null) {
      receiver.stop(0);
    }
  }

  private double count(String outcome) {
    return registry.get("pairpulse.alert.deliveries").tag("sink", "webhook").tag("outcome", outcome).counter().count();
  }

  private void awaitIdle() throws InterruptedException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(20);
    while (sink.pending() > 0 && System.nanoTime() < deadline) {
      Thread.sleep(20);
    }
    assertEquals(0, sink.pending());
  }

  @Test
  void retriesWithExponentialBackoffUntilDelivered() throws Exception {
    URI url = receiver(sequence(503, 500, 204), 0);
    sink = new WebhookAlertSink(new WebhookAlertSink.Settings(url, 5, Duration.ofMillis(150), Duration.ofSeconds(5),
        Duration.ofSeconds(5), 10), registry);
    sink.publish(EVENT, CloudEvents.json(EVENT));
    awaitIdle();
    assertEquals(3, arrivalsNanos.size());
    long firstGap = arrivalsNanos.get(1) - arrivalsNanos.get(0);
    long secondGap = arrivalsNanos.get(2) - arrivalsNanos.get(1);
    assertTrue(firstGap >= TimeUnit.MILLISECONDS.toNanos(150), "first retry after >= 150 ms: " + firstGap);
    assertTrue(secondGap >= TimeUnit.MILLISECONDS.toNanos(300), "second retry after >= 300 ms (doubled): " + secondGap);
    assertEquals(1, count("delivered"));
    assertEquals(2, count("retried"));
    assertEquals(0, count("failed"));
    // structured-mode CloudEvent over HTTP, read back by the CloudEvents reference SDK (cloudevents-json-jackson 4.0.1)
    assertEquals(CloudEvents.CONTENT_TYPE, contentTypes.get(0));
    EventFormat format = EventFormatProvider.getInstance().resolveFormat(JsonFormat.CONTENT_TYPE);
    CloudEvent event = format.deserialize(bodies.get(2));
    assertEquals(EVENT.id(), event.getId());
    assertEquals("org.pairpulse.alert.emerging.raised", event.getType());
    assertEquals(URI.create("/pairpulse/serve"), event.getSource());
    assertEquals("pairs/boost-lowlat/pack-esports", event.getSubject());
    assertEquals("all", event.getExtension("segment"));
    String data = new String(event.getData().toBytes(), java.nio.charset.StandardCharsets.UTF_8);
    assertTrue(data.contains("\"recentLift\":6.1") && data.contains("\"a\":\"boost-lowlat\""), data);
  }

  @Test
  void givesUpAfterMaxAttemptsAndSkipsPermanentErrors() throws Exception {
    publishOnceWithThreeAttempts(receiver(sequence(500), 0));
    assertEquals(3, arrivalsNanos.size());
    assertEquals(1, count("failed"));
    receiver.stop(0);
    arrivalsNanos.clear();
    sink.close();
    publishOnceWithThreeAttempts(receiver(sequence(400), 0)); // a client error is not retried
    assertEquals(1, arrivalsNanos.size());
    assertEquals(2, count("failed"));
  }

  /** A sink to {@code url} with 3 attempts (backoff 20 ms, capped at 40 ms) publishes one event; waits until idle. */
  private void publishOnceWithThreeAttempts(URI url) throws Exception {
    sink = new WebhookAlertSink(new WebhookAlertSink.Settings(url, 3, Duration.ofMillis(20), Duration.ofMillis(40),
        Duration.ofSeconds(5), 10), registry);
    sink.publish(EVENT, CloudEvents.json(EVENT));
    awaitIdle();
  }

  @Test
  void backoffDoublesUpToTheCap() throws Exception {
    sink = new WebhookAlertSink(new WebhookAlertSink.Settings(URI.create("http://127.0.0.1:9/"), 20,
        Duration.ofMillis(500), Duration.ofSeconds(30), Duration.ofSeconds(1), 1), registry);
    assertEquals(500, sink.backoffMillis(1));
    assertEquals(1000, sink.backoffMillis(2));
    assertEquals(16_000, sink.backoffMillis(6));
    assertEquals(30_000, sink.backoffMillis(7));
    assertEquals(30_000, sink.backoffMillis(20));
  }

  @Test
  void aHangingWebhookNeverBlocksTheCaller() throws Exception {
    URI url = receiver(sequence(204), 3_000);
    sink = new WebhookAlertSink(new WebhookAlertSink.Settings(url, 2, Duration.ofMillis(50), Duration.ofMillis(50),
        Duration.ofMillis(500), 2), registry);
    long start = System.nanoTime();
    for (int i = 0; i < 5; i++) {
      sink.publish(EVENT, CloudEvents.json(EVENT));
    }
    long tookMillis = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - start);
    assertTrue(tookMillis < 200, "publish returned after " + tookMillis + " ms");
    assertEquals(3, count("dropped"), "at most 2 events pending; the other 3 are dropped and counted");
    awaitIdle(); // the two pending ones time out after 500 ms, retry once, then fail
    assertEquals(2, count("failed"));
  }

  @Test
  void aSlowSinkNeverBlocksTheDispatcher() throws Exception {
    CountDownLatch release = new CountDownLatch(1);
    CountDownLatch entered = new CountDownLatch(1);
    AlertSink slow = new AlertSink() {
      @Override
      public String name() {
        return "slow";
      }

      @Override
      public void publish(AlertEvent event, byte[] cloudEvent) {
        try {
          entered.countDown();
          release.await(120, TimeUnit.SECONDS);
        } catch (InterruptedException e) {
          Thread.currentThread().interrupt();
        }
      }

      @Override
      public void close() {}
    };
    AlertHistory history = new AlertHistory(10);
    try (AlertDispatcher dispatcher = new AlertDispatcher(history, List.of(slow), registry)) {
      // no timing: dispatch returns while the sink is still held (it would wait for the release if it blocked)
      java.util.concurrent.CompletableFuture<Void> dispatched = java.util.concurrent.CompletableFuture.runAsync(
          () -> dispatcher.dispatch(List.of(EVENT, EVENT, EVENT)));
      dispatched.get(60, TimeUnit.SECONDS);
      assertTrue(entered.await(60, TimeUnit.SECONDS), "the sink was handed the event");
      assertEquals(1, release.getCount(), "the dispatcher returned while the sink was still held");
      assertEquals(3, history.size(), "recorded at once");
      assertEquals(3, registry.get("pairpulse.alerts").tag("kind", "emerging").counter().count());
      release.countDown();
    }
  }
}
