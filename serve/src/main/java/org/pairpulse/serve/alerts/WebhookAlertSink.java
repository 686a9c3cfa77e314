package org.pairpulse.serve.alerts;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.Objects;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.ThreadFactory;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.pairpulse.serve.drift.AlertEvent;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * POSTs each alert event to a webhook as a structured-mode CloudEvent
 * ({@code Content-Type: application/cloudevents+json}), with retries and exponential backoff.
 *
 * <h2>Delivery</h2>
 * Attempt n (n ≥ 1) that fails is retried after {@code min(maxBackoff, initialBackoff · 2^(n−1))}
 * until {@code maxAttempts} attempts were made. Failures that are retried: connection errors,
 * timeouts, 408, 425, 429 and 5xx. Other statuses (400, 401, 404, …) say the request itself is
 * wrong and are not retried. There is no jitter: one server sends, in order of alerts.
 *
 * <h2>Never slows anything down</h2>
 * {@link #publish} only starts an asynchronous request and returns; retries wait on a scheduler
 * thread of their own. At most {@code maxPending} events are in flight or waiting for a retry;
 * beyond that new events are dropped and counted ({@code outcome="dropped"}), so a dead webhook
 * costs bounded memory and no threads of the caller.
 */
public final class WebhookAlertSink implements AlertSink {
  private static final Logger LOG = LoggerFactory.getLogger(WebhookAlertSink.class);

  /**
   * @param url the webhook
   * @param maxAttempts attempts per event, the first included (≥ 1)
   * @param initialBackoff wait before the first retry
   * @param maxBackoff longest wait between attempts
   * @param timeout connect and response timeout of one attempt
   * @param maxPending events in flight or waiting for a retry before new ones are dropped
   */
  public record Settings(URI url, int maxAttempts, Duration initialBackoff, Duration maxBackoff, Duration timeout,
      int maxPending) {
    public Settings {
      Objects.requireNonNull(url, "url");
      if (!"http".equals(url.getScheme()) && !"https".equals(url.getScheme())) {
        throw new IllegalArgumentException("webhook URL must be http or https, got " + url);
      }
      if (maxAttempts < 1 || maxPending < 1) {
        throw new IllegalArgumentException("maxAttempts and maxPending must be >= 1");
      }
      if (initialBackoff.isNegative() || maxBackoff.compareTo(initialBackoff) < 0 || timeout.isNegative()
          || timeout.isZero()) {
        throw new IllegalArgumentException("need 0 <= initialBackoff <= maxBackoff and a positive timeout");
      }
    }
  }

  private final Settings settings;
  private final HttpClient client;
  private final ExecutorService httpThreads;
  private final ScheduledExecutorService retries;
  private final AtomicInteger pending = new AtomicInteger();
  private final Counter delivered;
  private final Counter failed;
  private final Counter dropped;
  private final Counter retried;

  public WebhookAlertSink(Settings settings, MeterRegistry registry) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.httpThreads = Executors.newFixedThreadPool(2, daemon("pairpulse-webhook-http"));
    this.client = HttpClient.newBuilder().executor(httpThreads).connectTimeout(settings.timeout())
        .followRedirects(HttpClient.Redirect.NEVER).build();
    this.retries = Executors.newSingleThreadScheduledExecutor(daemon("pairpulse-webhook-retry"));
    this.delivered = ServeAlertMeters.deliveries(registry, name(), "delivered");
    this.failed = ServeAlertMeters.deliveries(registry, name(), "failed");
    this.dropped = ServeAlertMeters.deliveries(registry, name(), "dropped");
    this.retried = ServeAlertMeters.deliveries(registry, name(), "retried");
  }

  private static ThreadFactory daemon(String name) {
    AtomicInteger n = new AtomicInteger();
    return r -> {
      Thread t = new Thread(r, name + "-" + n.incrementAndGet());
      t.setDaemon(true);
      return t;
    };
  }

  @Override
  public String name() {
    return "webhook";
  }

  @Override
  public void publish(AlertEvent event, byte[] cloudEvent) {
    if (pending.incrementAndGet() > settings.maxPending()) {
      pending.decrementAndGet();
      dropped.increment();
      LOG.warn("webhook backlog full ({} events): alert {} dropped", settings.maxPending(), event.id());
      return;
    }
    attempt(event, cloudEvent, 1);
  }

  private void attempt(AlertEvent event, byte[] body, int attempt) {
    HttpRequest request = HttpRequest.newBuilder(settings.url()).timeout(settings.timeout())
        .header("Content-Type", CloudEvents.CONTENT_TYPE)
        .header("User-Agent", "pairpulse-serve")
        .POST(HttpRequest.BodyPublishers.ofByteArray(body)).build();
    try {
      client.sendAsync(request, HttpResponse.BodyHandlers.discarding())
          .whenComplete((response, error) -> done(event, body, attempt, response, error));
    } catch (RuntimeException e) { // the client's executor is shut down
      done(event, body, attempt, null, e);
    }
  }

  private void done(AlertEvent event, byte[] body, int attempt, HttpResponse<Void> response, Throwable error) {
    if (error == null && response.statusCode() / 100 == 2) {
      delivered.increment();
      pending.decrementAndGet();
      return;
    }
    String why = error != null ? error.toString() : "HTTP " + response.statusCode();
    boolean retryable = error != null || retryable(response.statusCode());
    if (retryable && attempt < settings.maxAttempts() && !retries.isShutdown()) {
      long waitMillis = backoffMillis(attempt);
      retried.increment();
      LOG.debug("webhook attempt {} for alert {} failed ({}); retrying in {} ms", attempt, event.id(), why, waitMillis);
      try {
        retries.schedule(() -> attempt(event, body, attempt + 1), waitMillis, TimeUnit.MILLISECONDS);
        return;
      } catch (RuntimeException e) { // shut down meanwhile
        why = "shut down";
      }
    }
    failed.increment();
    pending.decrementAndGet();
    LOG.warn("alert {} not delivered to the webhook after {} attempt(s): {}", event.id(), attempt, why);
  }

  static boolean retryable(int status) {
    return status == 408 || status == 425 || status == 429 || status >= 500;
  }

  /** Wait after failed attempt {@code attempt}: min(max, initial · 2^(attempt−1)). */
  long backoffMillis(int attempt) {
    long initial = settings.initialBackoff().toMillis();
    long max = settings.maxBackoff().toMillis();
    int shift = Math.min(attempt - 1, 40);
    long wait = initial << shift;
    return wait < 0 || (wait >> shift) != initial ? max : Math.min(max, wait);
  }

  /** Events in flight or waiting for a retry. */
  public int pending() {
    return pending.get();
  }

  @Override
  public void close() {
    retries.shutdownNow();
    httpThreads.shutdownNow();
  }
}
