package org.pairpulse.ingest.testkit;

import java.time.Duration;
import java.util.HashMap;
import java.util.Map;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;

/** Ingest settings shared by the integration tests, and waits on an ingestor. */
public final class TestIngest {
  private TestIngest() {}

  /** Settings for one test's topics; {@code store} is kafka, local or none. */
  public static Map<String, Object> props(Broker broker, String name, String store) {
    Map<String, Object> p = new HashMap<>();
    p.put(IngestConfig.BOOTSTRAP_SERVERS, broker.bootstrapServers());
    p.put(IngestConfig.TOPICS, name);
    p.put(IngestConfig.GROUP_ID, "g-" + name);
    p.put(IngestConfig.DEAD_LETTER_TOPIC, name + "-dead-letters");
    p.put(IngestConfig.STATE_TOPIC, name + "-state");
    p.put(IngestConfig.CHECKPOINT_STORE, store);
    p.put(IngestConfig.CHECKPOINT_INTERVAL_MS, "1000");
    p.put(IngestConfig.ALLOWED_LATENESS_MS, Long.toString(Workload.ALLOWED_LATENESS_MS));
    p.put(IngestConfig.LINE_GAP_MS, Long.toString(Workload.LINE_GAP_MS));
    p.put(IngestConfig.MAX_BASKET_ITEMS, Integer.toString(Workload.MAX_BASKET_ITEMS));
    p.put(IngestConfig.REFRESH_INTERVAL_MS, "500");
    // quick failure detection for the rebalance and kill tests (the broker allows sessions from 1 s)
    p.put("kafka.consumer.session.timeout.ms", "4000");
    p.put("kafka.consumer.heartbeat.interval.ms", "500");
    p.put("kafka.producer.transaction.timeout.ms", "8000");
    return p;
  }

  /**
   * Adds segment counting by {@link Workload#SEGMENT_ATTRIBUTE} to {@code props}: segment engines at half the
   * tracked capacities, which still exceed the workload's distinct pairs, so that every segment count is exact.
   */
  public static Map<String, Object> withSegments(Map<String, Object> props) {
    props.put(IngestConfig.SEGMENT_ATTRIBUTES, Workload.SEGMENT_ATTRIBUTE);
    props.put(IngestConfig.SEGMENT_TRACKED_FRACTION, "0.5");
    return props;
  }

  /** Waits until the ingestor has read every partition of its input up to {@code ends}. */
  public static void awaitCaughtUp(Ingestor ingestor, Map<TopicPartition, Long> ends, Duration timeout) {
    Await.until(timeout, "ingestor " + ingestor.instanceId() + " to read up to " + ends,
        () -> {
          if (ingestor.failure() != null) {
            throw new AssertionError("ingestor failed", ingestor.failure());
          }
          Map<TopicPartition, Long> at = ingestor.positions();
          return ends.entrySet().stream().allMatch(e -> e.getValue() == 0 || at.getOrDefault(e.getKey(), -1L) >= e.getValue());
        },
        () -> "positions " + ingestor.positions());
  }
}
