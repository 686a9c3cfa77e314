package org.pairpulse.ops.tools.demo;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.HashMap;
import java.util.Iterator;
import java.util.Map;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.atomic.AtomicLong;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ops.tools.scenario.ScenarioBasket;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Plays the scenario into the basket topic on the accelerated clock: each basket is sent when the
 * simulated clock reaches its event time, keyed by basket id, as a basket event of ingest's contract
 * ({@link ScenarioFiles#jsonLine}).
 * The record timestamp is the wall clock (the producer's default): the event time travels in the
 * event's {@code time} field, and a simulated time far from now would make the broker roll and expire
 * log segments at once.
 *
 * <p>Baskets before {@code clock.simStartMillis()} (a fast-forward) are sent as fast as the broker takes them,
 * a backfill; then {@code beforeClock} runs (the demo waits there until ingest has counted them) and the clock
 * starts with the first basket at or after that time.
 *
 * <p>One thread of its own. When the pipeline cannot keep up, the producer does not skip: it sends as
 * fast as it can and the simulated clock of the data falls behind the demo clock (the progress line
 * shows both).
 */
final class ScenarioProducer implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(ScenarioProducer.class);
  /** Sleep only when the next basket is this far ahead; closer ones are sent at once (timer resolution). */
  private static final long MIN_SLEEP_MILLIS = 5;

  private final ScenarioGenerator scenario;
  private final AcceleratedClock clock;
  private final long simEndMillis;
  private final String topic;
  private final Producer<byte[], byte[]> producer;
  private final Thread thread;
  private final Runnable beforeClock;
  private final AtomicLong sent = new AtomicLong();
  private final AtomicLong failed = new AtomicLong();
  private final CountDownLatch done = new CountDownLatch(1);
  private volatile long lastEventMillis = Long.MIN_VALUE;
  private volatile boolean running = true;
  private volatile Throwable failure;

  /**
   * @param simEndMillis event time (exclusive) at which to stop; the scenario may end earlier
   */
  ScenarioProducer(ScenarioGenerator scenario, AcceleratedClock clock, long simEndMillis, String bootstrapServers,
      String topic, Runnable beforeClock) {
    this.beforeClock = beforeClock;
    this.scenario = scenario;
    this.clock = clock;
    this.simEndMillis = simEndMillis;
    this.topic = topic;
    Map<String, Object> props = new HashMap<>();
    props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers);
    props.put(ProducerConfig.CLIENT_ID_CONFIG, "pairpulse-demo-scenario");
    props.put(ProducerConfig.ACKS_CONFIG, "all");
    props.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    props.put(ProducerConfig.BATCH_SIZE_CONFIG, 128 * 1024);
    this.producer = new KafkaProducer<>(props, new ByteArraySerializer(), new ByteArraySerializer());
    this.thread = new Thread(this::play, "pairpulse-demo-scenario");
    this.thread.setDaemon(true);
  }

  void start() {
    thread.start();
  }

  private void play() {
    try {
      Iterator<ScenarioBasket> baskets = scenario.iterator();
      while (running && baskets.hasNext()) {
        ScenarioBasket basket = baskets.next();
        if (basket.eventMillis() >= simEndMillis) {
          break;
        }
        if (!clock.isStarted()) {
          if (basket.eventMillis() < clock.simStartMillis()) {
            send(basket); // fast-forward
            continue;
          }
          if (sent.get() > 0) { // there was a fast-forward
            producer.flush();
            beforeClock.run(); // the demo waits here until ingest has counted the fast-forward
          }
          clock.start();
        }
        long wait = clock.wallMillisUntil(basket.eventMillis());
        while (running && wait >= MIN_SLEEP_MILLIS) {
          Thread.sleep(Math.min(wait, 200));
          wait = clock.wallMillisUntil(basket.eventMillis());
        }
        if (!running) {
          break;
        }
        send(basket);
      }
      producer.flush();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    } catch (RuntimeException e) {
      failure = e;
      LOG.error("the demo's scenario producer stopped", e);
    } finally {
      done.countDown();
    }
  }

  private void send(ScenarioBasket basket) {
    byte[] key = basket.id().getBytes(StandardCharsets.UTF_8);
    byte[] value = ScenarioFiles.jsonLine(basket).getBytes(StandardCharsets.UTF_8); // ingest's basket event
    producer.send(new ProducerRecord<>(topic, key, value), (metadata, error) -> {
      if (error != null && failed.getAndIncrement() == 0) {
        LOG.warn("demo basket not delivered: {}", error.toString());
      }
    });
    sent.incrementAndGet();
    lastEventMillis = basket.eventMillis();
  }

  /** Baskets handed to the producer so far. */
  long sent() {
    return sent.get();
  }

  /** Baskets the broker refused (after the producer's retries). */
  long failed() {
    return failed.get();
  }

  /** Event time of the newest basket sent (Long.MIN_VALUE before one). */
  long lastEventMillis() {
    return lastEventMillis;
  }

  /** True once every basket up to the end was sent and flushed (or the producer stopped). */
  boolean finished() {
    return done.getCount() == 0;
  }

  void awaitFinished() throws InterruptedException {
    done.await();
  }

  Throwable failure() {
    return failure;
  }

  /** Stops sending; baskets already handed over are flushed. */
  @Override
  public void close() {
    running = false; // the thread sleeps at most 200 ms at a time; not interrupted, so a send or flush is not cut
    try {
      done.await();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
    producer.close(Duration.ofSeconds(5));
  }
}
