package org.pairpulse.ops.pipeline;

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
import org.pairpulse.serve.alerts.AlertSink;
import org.pairpulse.serve.alerts.CloudEvents;
import org.pairpulse.serve.drift.AlertEvent;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Alert events to a Kafka topic, in the same form as serve's own topic sink (structured-mode
 * CloudEvents: key = subject, value = the JSON event, header {@code content-type}), but with the
 * process's Kafka client settings passed through, so that SASL/TLS clusters work. Counts deliveries in
 * {@code pairpulse.alert.deliveries{sink="kafka", outcome}} like serve's sinks. The producer is made on the first
 * alert (on the dispatcher's thread), so that the sink can exist before the cluster answers.
 */
final class KafkaTopicAlertSink implements AlertSink {
  private static final Logger LOG = LoggerFactory.getLogger(KafkaTopicAlertSink.class);

  private final Map<String, Object> props;
  private final String topic;
  private Producer<byte[], byte[]> producer; // made on the first event: the cluster may not be up when serve starts
  private final Counter delivered;
  private final Counter failed;

  /**
   * @param clientProperties bootstrap servers and pass-through settings ({@link KafkaClientProperties})
   * @param topic the alerts topic
   */
  KafkaTopicAlertSink(Map<String, Object> clientProperties, String topic, MeterRegistry registry) {
    Map<String, Object> props = new HashMap<>();
    props.put(ProducerConfig.CLIENT_ID_CONFIG, "pairpulse-alerts");
    props.put(ProducerConfig.ACKS_CONFIG, "all");
    props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    props.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    props.put(ProducerConfig.MAX_BLOCK_MS_CONFIG, 10_000);
    props.put(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, 120_000);
    props.putAll(clientProperties);
    props.remove(ProducerConfig.TRANSACTIONAL_ID_CONFIG); // alerts are not part of ingest's checkpoint transaction
    this.props = props;
    this.topic = topic;
    this.delivered = deliveries(registry, "delivered");
    this.failed = deliveries(registry, "failed");
  }

  private Counter deliveries(MeterRegistry registry, String outcome) {
    return Counter.builder("pairpulse.alert.deliveries").description("Alert events handed to a sink, by outcome")
        .tag("sink", name()).tag("outcome", outcome).register(registry);
  }

  @Override
  public String name() {
    return "kafka";
  }

  @Override
  public void publish(AlertEvent event, byte[] cloudEvent) {
    // the record timestamp is the wall clock (the producer's default), not the alert's event time: an event time
    // far in the past (a replay, the demo's simulated clock) would make the broker roll and expire segments at once
    ProducerRecord<byte[], byte[]> record = new ProducerRecord<>(topic,
        CloudEvents.subject(event).getBytes(StandardCharsets.UTF_8), cloudEvent);
    record.headers().add("content-type", CloudEvents.CONTENT_TYPE.getBytes(StandardCharsets.UTF_8));
    try {
      if (producer == null) { // the dispatcher's thread only
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

  @Override
  public void close() {
    if (producer != null) {
      producer.close(Duration.ofSeconds(5));
    }
  }
}
