package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Random;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;

/**
 * A checkpoint committed behind another instance's open transaction (an instance killed mid-checkpoint)
 * is hidden from {@code read_committed} readers until that transaction is aborted. A restore must wait for
 * it, not fall back to an older checkpoint (dead letters again) or to none (baskets lost).
 */
@ExtendWith(SharedBroker.class)
class StateTopicStoreTest {

  static KafkaProducer<byte[], byte[]> transactional(Broker broker, String id) {
    Map<String, Object> p = new HashMap<>();
    p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
    p.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, id);
    p.put(ProducerConfig.TRANSACTION_TIMEOUT_CONFIG, 120_000); // the test aborts it itself
    p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p);
    producer.initTransactions();
    return producer;
  }

  static KafkaConsumer<byte[], byte[]> groupConsumer(Broker broker, String group) {
    Map<String, Object> p = new HashMap<>();
    p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
    p.put(ConsumerConfig.GROUP_ID_CONFIG, group);
    p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    return new KafkaConsumer<>(p);
  }

  @Test
  void aCheckpointBehindAnOpenTransactionIsWaitedForAndAMissingOneIsNot(Broker broker) throws Exception {
    String input = "hidden";
    String stateTopic = "hidden-state";
    String group = "g-hidden";
    broker.createTopic(input, 1, Map.of());
    broker.createTopic(stateTopic, 1, Map.of("cleanup.policy", "compact"));
    TopicPartition tp = new TopicPartition(input, 0);
    TopicPartition statePartition = new TopicPartition(stateTopic, 0);
    byte[] engine = new byte[10_000];
    new Random(5).nextBytes(engine);
    PartitionCheckpoint written = new PartitionCheckpoint(input, 0, 42, 1, 1_796_205_600_000L,
        "front".getBytes(StandardCharsets.UTF_8), engine);

    ScheduledExecutorService timer = Executors.newSingleThreadScheduledExecutor();
    try (KafkaProducer<byte[], byte[]> zombie = transactional(broker, "hidden-zombie");
        KafkaProducer<byte[], byte[]> live = transactional(broker, "hidden-live");
        KafkaConsumer<byte[], byte[]> reader = broker.reader();
        Admin admin = broker.admin()) {
      // the killed instance: a transaction left open on the state partition
      zombie.beginTransaction();
      zombie.send(new ProducerRecord<>(stateTopic, 0, "half".getBytes(StandardCharsets.UTF_8), new byte[] {1})).get();

      // another instance commits a checkpoint (3 chunks) and the offsets pointing at it, after it
      StateTopicStore store = new StateTopicStore(stateTopic, group, 1, 4096, live, Duration.ofSeconds(120),
          source -> StateTopicReader.logEndOffset(admin, source));
      live.beginTransaction();
      StateTopicStore.Written w = store.write(List.of(written));
      try (KafkaConsumer<byte[], byte[]> member = groupConsumer(broker, group)) { // not subscribed: a simple commit
        live.sendOffsetsToTransaction(w.offsets(), member.groupMetadata());
      }
      live.commitTransaction();
      // a transactional offset commit shows once the coordinator has written the commit markers: on a loaded
      // machine that can lag the producer's return, so ask again for a bounded time
      OffsetAndMetadata committed = null;
      long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
      while (committed == null && System.nanoTime() < deadline) {
        committed = admin.listConsumerGroupOffsets(group).partitionsToOffsetAndMetadata()
            .get(60, TimeUnit.SECONDS).get(tp);
        if (committed == null) {
          Thread.sleep(100);
        }
      }
      assertNotNull(committed, "the committed offsets of " + group);
      assertEquals(42, committed.offset());
      assertTrue(committed.metadata().startsWith("pp1 0 1 3 1"), committed.metadata());
      assertEquals(0L, reader.endOffsets(List.of(statePartition)).get(statePartition),
          "precondition: the open transaction hides everything after it from read_committed readers");

      // the coordinator would abort the zombie after its transaction timeout; here the test does
      ScheduledFuture<?> abort = timer.schedule(() -> zombie.abortTransaction(), 2, TimeUnit.SECONDS);
      long t0 = System.nanoTime();
      Optional<PartitionCheckpoint> loaded = store.load(reader, tp, committed);
      long waitedMs = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - t0);
      abort.get(60, TimeUnit.SECONDS);
      assertTrue(loaded.isPresent(), "the committed checkpoint was not found behind the open transaction");
      assertEquals(1, loaded.get().checkpointId());
      assertEquals(42, loaded.get().nextOffset());
      assertTrue(java.util.Arrays.equals(engine, loaded.get().engine()), "engine bytes");
      System.out.printf("checkpoint behind an open transaction read after %d ms%n", waitedMs);

      // the public reader sees it too
      Map<TopicPartition, PartitionCheckpoint> all = StateTopicReader.read(broker.bootstrapServers(), stateTopic, group,
          List.of(input), Map.of());
      assertEquals(42, all.get(tp).nextOffset());

      // metadata pointing at a checkpoint that is not there, with nothing open: no waiting out the timeout,
      // the scan finds the newest complete checkpoint
      t0 = System.nanoTime();
      Optional<PartitionCheckpoint> scanned = store.load(reader, tp, new OffsetAndMetadata(42, "pp1 0 1 3 77"));
      long scanMs = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - t0);
      assertTrue(scanned.isPresent());
      assertEquals(1, scanned.get().checkpointId());
      assertTrue(scanMs < 60_000, "a missing checkpoint is given up once the log end is read, not after the 120 s timeout: "
          + scanMs + " ms");
    } finally {
      timer.shutdownNow();
    }
  }
}
