package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;

/**
 * An offset commit made in a transaction is pending until the transaction ends: a plain offset fetch then answers
 * the previous offset (which points at the previous checkpoint), a stable fetch waits for the new one (KIP-447's
 * {@code require_stable}). The race this closes: a reader of the group's state right after an instance's last
 * checkpoint read the previous checkpoint of a partition and came out short of its last baskets.
 */
@ExtendWith(SharedBroker.class)
class StableOffsetsTest {

  @Test
  void anOffsetCommitPendingInATransactionIsWaitedForNotAnsweredWithThePreviousOne(Broker broker) throws Exception {
    String input = "stable-offsets";
    String group = "g-stable-offsets";
    broker.createTopic(input, 2, Map.of());
    TopicPartition p0 = new TopicPartition(input, 0);
    TopicPartition p1 = new TopicPartition(input, 1);
    ScheduledExecutorService timer = Executors.newSingleThreadScheduledExecutor();
    try (KafkaProducer<byte[], byte[]> producer = StateTopicStoreTest.transactional(broker, "stable-offsets-tx");
        KafkaConsumer<byte[], byte[]> member = StateTopicStoreTest.groupConsumer(broker, group); // not subscribed
        Admin admin = broker.admin()) {
      producer.beginTransaction();
      producer.sendOffsetsToTransaction(Map.of(p0, new OffsetAndMetadata(5, "first")), member.groupMetadata());
      producer.commitTransaction();
      Map<TopicPartition, OffsetAndMetadata> first = StableOffsets.committed(admin, group, List.of(p0, p1));
      assertEquals(5, first.get(p0).offset(), "the first commit");
      assertTrue(first.containsKey(p1), "a partition never committed is answered");
      assertNull(first.get(p1), "a partition never committed has no offset");

      // the next commit, still pending in an open transaction
      producer.beginTransaction();
      producer.sendOffsetsToTransaction(Map.of(p0, new OffsetAndMetadata(9, "second")), member.groupMetadata());
      assertEquals(5, admin.listConsumerGroupOffsets(group).partitionsToOffsetAndMetadata().get(60, TimeUnit.SECONDS)
          .get(p0).offset(), "precondition: a plain fetch answers the previous offset while the commit is pending");
      assertThrows(TimeoutException.class, () -> StableOffsets.committed(admin, group, List.of(p0), Duration.ofSeconds(2)),
          "a stable fetch does not answer while the commit is pending");

      ScheduledFuture<?> commit = timer.schedule(producer::commitTransaction, 1, TimeUnit.SECONDS);
      Map<TopicPartition, OffsetAndMetadata> second = StableOffsets.committed(admin, group, List.of(p0, p1),
          Duration.ofSeconds(60));
      commit.get(60, TimeUnit.SECONDS);
      assertEquals(9, second.get(p0).offset(), "the stable fetch answers the commit once its transaction ended");
      assertEquals("second", second.get(p0).metadata());
    } finally {
      timer.shutdownNow();
    }
  }
}
