package org.pairpulse.serve.alerts;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.HashMap;
import java.util.Map;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.serve.drift.AlertEvent;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Publishes alert events to a Kafka topic as structured-mode CloudEvents: key = subject, value =
 * the JSON event, header {@code content-type}. Idempotent producer, {@code acks=all}; a send that
 * fails after the producer's own retries is logged and counted (alerts are also in the history).
 *
 * <p>The producer is made on the first alert, on the dispatcher's thread, so that the sink can exist before
 * the cluster answers (the demo starts the server before its broker). The record timestamp is the wall
 * clock (the producer's default), not the alert's event time: an event time far in the past (a replay, the
 * demo's simulated clock) would make the broker roll and expire segments at once.
 */
public final class KafkaAlertSink implements AlertSink {
  private static final Logger LOG = LoggerFactory.getLogger(KafkaAlertSink.class);

  private final Map<String, Object> props;
  private final String topic;
  private Producer<byte[], byte[]> producer; // made on the first event (the dispatcher's thread)
  private final Counter delivered;
  private final Counter failed;

  /**
   * @param bootstrapServers the cluster
   * @param topic the alerts topic (created by the broker on first use if it allows that, else beforehand)
   * @param registry where delivery counts go
   */
  public KafkaAlertSink(String bootstrapServers, String topic, MeterRegistry registry) {
    this(Map.of(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers), topic, registry);
  }

  /**
   * @param clientProperties producer settings: bootstrap servers and any pass-through setting (SASL, TLS);
   *     they win over this sink's defaults, except that a transactional id is dropped (alerts are not part of
   *     any transaction)
   * @param topic the alerts topic
   * @param registry where delivery counts go
   */
  public KafkaAlertSink(Map<String, Object> clientProperties, String topic, MeterRegistry registry) {
    Map<String, Object> props = new HashMap<>();
    props.put(ProducerConfig.CLIENT_ID_CONFIG, "pairpulse-alerts");
    props.put(ProducerConfig.ACKS_CONFIG, "all");
    props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    props.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    props.put(ProducerConfig.MAX_BLOCK_MS_CONFIG, 10_000);
    props.put(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, 120_000);
    props.putAll(clientProperties);
    props.remove(ProducerConfig.TRANSACTIONAL_ID_CONFIG);
    this.props = props;
    this.topic = topic;
    this.delivered = ServeAlertMeters.deliveries(registry, name(), "delivered");
    this.failed = ServeAlertMeters.deliveries(registry, name(), "failed");
  }

  @Override
  public String name() {
    return "kafka";
  }

  @Override
  public void publish(AlertEvent event, byte[] cloudEvent) {
    ProducerRecord<byte[], byte[]> record = new ProducerRecord<>(topic,
        CloudEvents.subject(event).getBytes(StandardCharsets.UTF_8), cloudEvent);
    record.headers().add("content-type", CloudEvents.CONTENT_TYPE.getBytes(StandardCharsets.UTF_8));
    try {
      if (producer == null) {
        producer = new KafkaProducer<>(props, new ByteArraySerializer(), new ByteArraySerializer());
      }
      producer.send(record, (metadata, error) -> {
        if (error == null) {
          delivered.increment();
        } else {
          failed.increment();
          LOG.warn("alert {} not delivered to topic {}: {}", event.id(), topic, error.toString());
        }
      });
    } catch (RuntimeException e) { // bad settings, metadata timeout, closed producer
      failed.increment();
      LOG.warn("alert {} not sent to topic {}: {}", event.id(), topic, e.toString());
    }
  }

  /** Waits for sent events to be acknowledged (tests, shutdown). */
  public void flush() {
    if (producer != null) {
      producer.flush();
    }
  }

  @Override
  public void close() {
    if (producer != null) {
      producer.close(Duration.ofSeconds(5));
    }
  }
}
