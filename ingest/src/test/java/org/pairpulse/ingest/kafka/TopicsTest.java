package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.CompletionException;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.clients.producer.RecordMetadata;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;

/** {@link Topics#awaitWritable}: waits for a topic still being created, then an idempotent producer's writes all land. */
@ExtendWith(SharedBroker.class)
class TopicsTest {

  @Test
  void waitsUntilTheLeadersServeThenIdempotentWritesLand(Broker broker) throws Exception {
    String topic = "appears-later";
    try (Admin admin = broker.admin()) {
      CompletableFuture<Void> ready = CompletableFuture.runAsync(() -> {
        try {
          Topics.awaitWritable(admin, List.of(topic), Duration.ofSeconds(120));
        } catch (Exception e) {
          throw new CompletionException(e);
        }
      });
      assertFalse(ready.isDone(), "ready before the topic exists");
      admin.createTopics(List.of(new NewTopic(topic, Optional.of(4), Optional.of((short) 1)))).all().get(60, TimeUnit.SECONDS);
      ready.get(130, TimeUnit.SECONDS);

      // the producer settings that lose the sequence race on a partition whose leader is not set up yet
      Map<String, Object> p = new HashMap<>();
      p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
      p.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
      p.put(ProducerConfig.MAX_IN_FLIGHT_REQUESTS_PER_CONNECTION, 5);
      p.put(ProducerConfig.BATCH_SIZE_CONFIG, 1024);
      p.put(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, 120_000);
      p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
      p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
      List<Future<RecordMetadata>> sent = new java.util.ArrayList<>();
      try (KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p)) {
        for (int i = 0; i < 2000; i++) {
          sent.add(producer.send(new ProducerRecord<>(topic, i % 4, null, new byte[100])));
        }
        producer.flush();
      }
      for (Future<RecordMetadata> f : sent) {
        assertTrue(f.get().offset() >= 0);
      }

      TimeoutException never = assertThrows(TimeoutException.class,
          () -> Topics.awaitWritable(admin, List.of("never-created"), Duration.ofSeconds(1)));
      assertTrue(never.getMessage().contains("never-created"), never.getMessage());
    }
  }
}
