package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;
import org.pairpulse.ingest.testkit.TestIngest;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * Group mode restores through the instance's one consumer without blocking its poll loop: the newest checkpoints of
 * both partitions are committed behind a transaction that a "killed instance" left open on the state topic, so
 * nothing {@code read_committed} shows them yet. The instance that takes the partitions over keeps them paused and
 * unrestored while its loop goes on (it answers a view), and restores them, exactly, once the open transaction ends.
 */
@ExtendWith(SharedBroker.class)
class PausedRestoreTest {

  @Test
  void aRestoreBehindAnOpenTransactionWaitsPausedWhileTheLoopGoesOn(Broker broker) throws Exception {
    String topic = "paused-restore";
    broker.createTopic(topic, 2, Map.of());
    Workload w = Workload.generate(41, 1200);
    int half = w.records.size() / 2;
    Map<String, Object> props = TestIngest.props(broker, topic, "kafka");
    try (KafkaProducer<byte[], byte[]> producer = broker.producer()) {
      w.produce(producer, topic, 0, half);
    }
    try (Ingestor a = GroupTest.instance(props, "a")) { // first checkpoints, before anything is left open
      TestIngest.awaitCaughtUp(a, broker.endOffsets(topic), Duration.ofSeconds(120));
    }
    try (KafkaProducer<byte[], byte[]> zombie = StateTopicStoreTest.transactional(broker, "paused-zombie")) {
      zombie.beginTransaction();
      for (int sp = 0; sp < 2; sp++) {
        zombie.send(new ProducerRecord<>(topic + "-state", sp, "half".getBytes(StandardCharsets.UTF_8), new byte[] {1}))
            .get(30, TimeUnit.SECONDS);
      }
      try (KafkaProducer<byte[], byte[]> producer = broker.producer()) {
        w.produce(producer, topic, half, w.records.size());
      }
      try (Ingestor a = GroupTest.instance(props, "a")) { // its final checkpoints land behind the open transaction
        TestIngest.awaitCaughtUp(a, broker.endOffsets(topic), Duration.ofSeconds(120));
      }

      try (Ingestor b = GroupTest.instance(props, "b")) {
        Thread.sleep(3000); // time to join, be assigned both partitions and look for their checkpoints
        PairEngine meanwhile = b.view().get(30, TimeUnit.SECONDS); // the poll loop answers: not blocked
        assertEquals(0, meanwhile.stats().baskets(), 0.0, "nothing counted before the restore");
        assertEquals(Set.of(), b.assignment(), "both partitions wait, unrestored, behind the open transaction");
        assertEquals(0, b.metrics().restoreCount(), 0.0, "no restore yet");

        zombie.abortTransaction(); // the coordinator would, after the dead instance's transaction timeout
        TestIngest.awaitCaughtUp(b, broker.endOffsets(topic), Duration.ofSeconds(120));
        assertEquals(Set.of(new TopicPartition(topic, 0), new TopicPartition(topic, 1)), b.assignment());
        assertTrue(b.metrics().restoreCount() >= 2, "both partitions restored from checkpoints");
        assertEquals(0, b.metrics().recordCount(), 0.0, "the restored checkpoints were a's newest, the hidden ones: "
            + "nothing left to read");
        w.assertExact(b.view().get(30, TimeUnit.SECONDS));
      }
    }
  }
}
