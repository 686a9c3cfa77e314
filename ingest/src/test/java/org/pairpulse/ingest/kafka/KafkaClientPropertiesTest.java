package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;

import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;

/**
 * The one client-properties builder against the rules README-ingest.md states (Configuration, Consumption):
 * {@code kafka.X} reaches every client, {@code kafka.<kind>.X} one kind and wins; ingest's defaults give way to the
 * pass-through, the settings it cannot work without do not.
 */
class KafkaClientPropertiesTest {
  private static IngestConfig config(String store, String... passThrough) {
    Map<String, Object> props = new HashMap<>(Map.of("bootstrap.servers", "h1:9092,h2:9092", "topics", "t",
        "group.id", "g", "checkpoint.store", store));
    for (int i = 0; i < passThrough.length; i += 2) {
      props.put(passThrough[i], passThrough[i + 1]);
    }
    return new IngestConfig(props);
  }

  @Test
  void anotherClientGetsBootstrapAndItsKindsPassThroughOnly() {
    IngestConfig config = config("kafka", "kafka.security.protocol", "SASL_SSL", "kafka.linger.ms", "7",
        "kafka.producer.linger.ms", "1", "kafka.consumer.max.poll.records", "10");
    assertEquals(Map.of("bootstrap.servers", "h1:9092,h2:9092", "security.protocol", "SASL_SSL", "linger.ms", "1"),
        KafkaClientProperties.forClient(config, KafkaClientProperties.Kind.PRODUCER), "kafka.producer.X wins over kafka.X");
    assertEquals(Map.of("bootstrap.servers", "h1:9092,h2:9092", "security.protocol", "SASL_SSL", "linger.ms", "7",
        "max.poll.records", "10"), KafkaClientProperties.forClient(config, KafkaClientProperties.Kind.CONSUMER));
    assertEquals(Map.of("bootstrap.servers", "h1:9092,h2:9092", "security.protocol", "SASL_SSL", "linger.ms", "7"),
        KafkaClientProperties.forClient(config, KafkaClientProperties.Kind.ADMIN));
  }

  @Test
  void ingestDefaultsGiveWayButItsByteArraysAndSharedStateRulesDoNot() {
    IngestConfig config = config("kafka", "kafka.consumer.max.poll.records", "10",
        "kafka.consumer.key.deserializer", "org.apache.kafka.common.serialization.StringDeserializer",
        "kafka.consumer.group.instance.id", "pod-1", "kafka.consumer.isolation.level", "read_uncommitted",
        "kafka.producer.compression.type", "zstd");
    KafkaClientProperties clients = new KafkaClientProperties(config, "i1");

    Map<String, Object> consumer = clients.groupConsumer(List.of());
    assertEquals("10", consumer.get(ConsumerConfig.MAX_POLL_RECORDS_CONFIG), "a default overridden by pass-through");
    assertEquals(4 << 20, consumer.get(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG), "a default kept");
    assertEquals("g", consumer.get(ConsumerConfig.GROUP_ID_CONFIG));
    assertEquals("pairpulse-i1", consumer.get(ConsumerConfig.CLIENT_ID_CONFIG));
    assertEquals(false, consumer.get(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG));
    assertEquals(ByteArrayDeserializer.class.getName(), consumer.get(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG),
        "the poll loop reads bytes, whatever is passed through");

    assertEquals("read_uncommitted", consumer.get(ConsumerConfig.ISOLATION_LEVEL_CONFIG), "without shared topics: passed through");

    Map<String, Object> shared = clients.groupConsumer(List.of("state", "state.alerts"));
    assertEquals("read_committed", shared.get(ConsumerConfig.ISOLATION_LEVEL_CONFIG), "checkpoints: committed only");
    assertEquals("classic", shared.get(ConsumerConfig.GROUP_PROTOCOL_CONFIG), "the client-side assignor decides");
    assertEquals(SharedTopicsAssignor.class.getName(), shared.get(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG));
    assertEquals("state,state.alerts", shared.get(SharedTopicsAssignor.SHARED_TOPICS));
    assertEquals("pod-1", shared.get(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG), "a static member still");
    assertEquals("pairpulse-i1", shared.get(ConsumerConfig.CLIENT_ID_CONFIG));

    Map<String, Object> producer = clients.producer();
    assertEquals("zstd", producer.get(ProducerConfig.COMPRESSION_TYPE_CONFIG));
    assertEquals("all", producer.get(ProducerConfig.ACKS_CONFIG));
    assertEquals("pairpulse-g-i1", producer.get(ProducerConfig.TRANSACTIONAL_ID_CONFIG), "group mode: transactional");
    assertEquals(ByteArraySerializer.class.getName(), producer.get(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG));
    assertEquals("pairpulse-i1-admin", clients.admin("admin").get("client.id"));
  }

  @Test
  void onlyGroupModeProducesInTransactions() {
    for (String store : new String[] {"local", "none"}) {
      Map<String, Object> producer = new KafkaClientProperties(config(store), "i1").producer();
      assertFalse(producer.containsKey(ProducerConfig.TRANSACTIONAL_ID_CONFIG), store);
      assertEquals(true, producer.get(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG), store);
    }
  }
}
