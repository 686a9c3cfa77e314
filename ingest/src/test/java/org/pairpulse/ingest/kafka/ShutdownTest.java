package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;
import org.pairpulse.ingest.testkit.TestIngest;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.time.EventClock;

/**
 * A clean stop whose final checkpoint fails to commit (as when another instance leaves the group at the
 * same moment and the generation goes stale) still leaves the group's state complete: the instance reads
 * its partitions again from their last checkpoints and commits again before it closes. The same when the commit
 * that fails is a periodic one just before the stop (its partitions are rewound when the final checkpoint begins).
 */
@ExtendWith(SharedBroker.class)
class ShutdownTest {

  @Test
  void aFinalCheckpointThatFailsToCommitIsRedoneBeforeClosing(Broker broker) throws Exception {
    stopWithAFailedCommit(broker, "shutdown", Ingestor::close);
  }

  @Test
  void aCheckpointThatFailsJustBeforeTheStopIsMadeGoodByTheFinalOne(Broker broker) throws Exception {
    stopWithAFailedCommit(broker, "shutdown-after-failure", ingestor -> {
      ingestor.stopRightAfterACheckpoint();
      ingestor.close();
    });
  }

  /** Reads a whole input, makes the next commit fail, stops with {@code stop}: the group's state is complete. */
  private static void stopWithAFailedCommit(Broker broker, String topic, java.util.function.Consumer<Ingestor> stop)
      throws Exception {
    broker.createTopic(topic, 3, Map.of());
    Workload w = Workload.generate(41, 1000);
    w.produce(broker, topic, 0, w.records.size());
    Map<TopicPartition, Long> ends = broker.endOffsets(topic);
    Map<String, Object> props = TestIngest.props(broker, topic, "kafka");
    // no checkpoint before the final one
    props.put("kafka.producer.transaction.timeout.ms", "120000");
    props.put(IngestConfig.CHECKPOINT_INTERVAL_MS, "100000");
    Ingestor ingestor = new Ingestor(new IngestConfig(props), Workload.engineConfig(), new SimpleMeterRegistry(),
        EventClock.system()).start();
    try {
      TestIngest.awaitCaughtUp(ingestor, ends, Duration.ofSeconds(120));
      assertEquals(0, ingestor.metrics().checkpointCount(), "nothing checkpointed before the stop");
      ingestor.failNextCommits(1);
    } finally {
      stop.accept(ingestor);
    }
    assertEquals(1, ingestor.metrics().checkpointFailureCount(), 0.0, "a commit failed once");
    Map<TopicPartition, PartitionCheckpoint> state = StateTopicReader.read(broker.bootstrapServers(), topic + "-state",
        "g-" + topic, List.of(topic), Map.of());
    assertEquals(3, state.size(), "a checkpoint per partition after the final checkpoint");
    state.forEach((tp, cp) -> assertEquals(ends.get(tp), cp.nextOffset(), "checkpoint of " + tp + " covers its input"));
    w.assertExact(StateTopicReader.merge(Workload.engineConfig(), state));
    Map<DeadLetterReason, Long> byReason = new EnumMap<>(DeadLetterReason.class);
    for (ConsumerRecord<byte[], byte[]> r : KafkaIngestTest.readAll(broker, topic + "-dead-letters")) {
      byReason.merge(DeadLetterReason.fromWireName(new String(r.headers().lastHeader(DeadLetters.REASON).value(),
          StandardCharsets.UTF_8)), 1L, Long::sum);
    }
    assertEquals(w.deadLetters, byReason, "dead letters exactly once: the aborted attempt's are not visible");
  }
}
