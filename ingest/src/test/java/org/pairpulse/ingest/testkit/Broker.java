package org.pairpulse.ingest.testkit;

import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ingest.kafka.Topics;

/** The broker an integration test talks to: the in-process one, or a container (-Dbroker=container). */
public interface Broker extends AutoCloseable {
  String bootstrapServers();

  default Admin admin() {
    return Admin.create(Map.of(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers()));
  }

  /** Creates a topic and returns once every partition accepts writes (see {@link Topics#awaitWritable}). */
  default void createTopic(String name, int partitions, Map<String, String> configs) {
    try (Admin admin = admin()) {
      admin.createTopics(List.of(new NewTopic(name, Optional.of(partitions), Optional.of((short) 1)).configs(configs)))
          .all().get(60, TimeUnit.SECONDS);
      Topics.awaitWritable(admin, List.of(name), Duration.ofSeconds(120));
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted creating topic " + name, e);
    } catch (Exception e) {
      throw new IllegalStateException("cannot create topic " + name + ": " + e.getMessage(), e);
    }
  }

  /**
   * An idempotent producer for test input. One request in flight: besides the readiness wait of
   * {@link #createTopic}, this keeps a retried first batch from being overtaken by a later one (the
   * sequence race described in {@link Topics}). Deadlines are generous: they only matter when the broker is stuck.
   */
  default KafkaProducer<byte[], byte[]> producer() {
    Map<String, Object> p = new HashMap<>();
    p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
    p.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    p.put(ProducerConfig.ACKS_CONFIG, "all");
    p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    p.put(ProducerConfig.MAX_IN_FLIGHT_REQUESTS_PER_CONNECTION, 1);
    p.put(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, 120_000);
    p.put(ProducerConfig.REQUEST_TIMEOUT_MS_CONFIG, 30_000);
    p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    return new KafkaProducer<>(p);
  }

  /** A group-less read_committed consumer. */
  default KafkaConsumer<byte[], byte[]> reader() {
    Map<String, Object> p = new HashMap<>();
    p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
    p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    p.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    return new KafkaConsumer<>(p);
  }

  /** End offsets (read_committed) of every partition of {@code topic}. */
  default Map<TopicPartition, Long> endOffsets(String topic) {
    try (KafkaConsumer<byte[], byte[]> reader = reader()) {
      List<TopicPartition> parts = reader.partitionsFor(topic).stream()
          .map(p -> new TopicPartition(topic, p.partition())).toList();
      return reader.endOffsets(parts);
    }
  }

  @Override
  void close();
}
