package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.BufferedReader;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.time.Duration;
import java.util.EnumMap;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.testkit.Await;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.ChildIngest;
import org.pairpulse.ingest.testkit.SharedBroker;
import org.pairpulse.ingest.testkit.TestIngest;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.time.EventClock;

/**
 * Several instances in one consumer group: a rebalance hand-over, and scale-out with one instance killed; with
 * segment attributes, so segments move with their partitions and every segment's merged state stays exact.
 */
@ExtendWith(SharedBroker.class)
class GroupTest {

  static Ingestor instance(Map<String, Object> base, String id) {
    Map<String, Object> props = new HashMap<>(base);
    props.put(IngestConfig.INSTANCE_ID, id);
    return new Ingestor(new IngestConfig(props), Workload.engineConfig(), new SimpleMeterRegistry(), EventClock.system()).start();
  }

  static void awaitAllCaughtUp(List<Ingestor> instances, Map<TopicPartition, Long> ends, Duration timeout) {
    Await.until(timeout, "the group to own and read every partition up to " + ends, () -> {
      Map<TopicPartition, Long> at = new HashMap<>();
      for (Ingestor i : instances) {
        if (i.failure() != null) {
          throw new AssertionError("instance " + i.instanceId() + " failed", i.failure());
        }
        i.positions().forEach((tp, p) -> at.merge(tp, p, Math::max));
      }
      return ends.entrySet().stream().allMatch(e -> e.getValue() == 0 || at.getOrDefault(e.getKey(), -1L) >= e.getValue())
          && instances.stream().mapToInt(i -> i.assignment().size()).sum() == ends.size();
    }, () -> instances.stream().map(i -> i.instanceId() + "=" + i.positions()).toList().toString());
  }

  /** A second instance joins mid-stream: the first checkpoints what it gives up, the second restores it. */
  @Test
  void aJoiningInstanceTakesOverCheckpointedPartitions(Broker broker) throws Exception {
    String topic = "rebalance";
    broker.createTopic(topic, 4, Map.of());
    Workload w = Workload.generate(21, 2000);
    int half = w.records.size() / 2;
    w.produce(broker, topic, 0, half);
    Map<String, Object> props = TestIngest.withSegments(TestIngest.props(broker, topic, "kafka"));
    try (Ingestor a = instance(props, "a")) {
      awaitAllCaughtUp(List.of(a), broker.endOffsets(topic), Duration.ofSeconds(120));
      try (Ingestor b = instance(props, "b")) {
        Await.until(Duration.ofSeconds(120), "the partitions to be shared", () -> a.assignment().size() == 2 && b.assignment().size() == 2,
            () -> "a=" + a.assignment() + " b=" + b.assignment());
        w.produce(broker, topic, half, w.records.size());
        awaitAllCaughtUp(List.of(a, b), broker.endOffsets(topic), Duration.ofSeconds(120));
        // A checkpoint whose commit races a rebalance (on a busy machine the cooperative second round can
        // overlap a's periodic checkpoint) is aborted and its partitions are restored again: a legitimate
        // restore. Exact restore counts are checked when no commit failed.
        assertTrue(b.metrics().restoreCount() >= 2, "b restored both partitions it took over from a's checkpoints");
        if (b.metrics().checkpointFailureCount() == 0) {
          assertEquals(2, b.metrics().restoreCount(), 0.0, "b restored the two partitions it took over, nothing else");
        }
        if (a.metrics().checkpointFailureCount() == 0) {
          assertEquals(0, a.metrics().restoreCount(), 0.0, "a kept its other partitions without a restore (cooperative)");
        }
        assertTrue(a.metrics().checkpointCount() >= 1, "a checkpointed on revocation");
      }
    }
    Map<TopicPartition, PartitionCheckpoint> state = StateTopicReader.read(broker.bootstrapServers(), topic + "-state",
        "g-" + topic, List.of(topic), Map.of());
    assertEquals(4, state.size());
    state.forEach((tp, cp) -> System.out.printf("state of %s: checkpoint %d, next offset %d, %d baskets%n", tp,
        cp.checkpointId(), cp.nextOffset(), Snapshots.read(cp.engine()).stats().baskets()));
    w.assertExact(StateTopicReader.merge(Workload.engineConfig(), state));
    w.assertExactSegments(StateTopicReader.mergeSegments(state));
  }

  /** Three instances over six partitions, one killed (kill -9) mid-stream: the merged state is exact. */
  @Test
  void threeInstancesSixPartitionsOneKilledMidStream(Broker broker, @TempDir Path dir) throws Exception {
    String topic = "scale-out";
    broker.createTopic(topic, 6, Map.of());
    Workload w = Workload.generate(31, 3000);
    int half = w.records.size() / 2;
    w.produce(broker, topic, 0, half);
    Map<String, Object> props = TestIngest.withSegments(TestIngest.props(broker, topic, "kafka"));
    props.put(IngestConfig.CHECKPOINT_INTERVAL_BASKETS, "100");
    props.put("kafka.consumer.max.poll.records", "10");
    Map<String, Object> childProps = new HashMap<>(props);
    childProps.put(IngestConfig.INSTANCE_ID, "c");
    Path propsFile = dir.resolve("c.properties");
    ChildIngest.write(childProps, propsFile);
    Process c = ChildIngest.launch(propsFile, dir.resolve("c.log"));
    AtomicLong cHandled = new AtomicLong();
    Thread reader = new Thread(() -> {
      try (BufferedReader lines = new BufferedReader(new InputStreamReader(c.getInputStream(), StandardCharsets.UTF_8))) {
        String line;
        while ((line = lines.readLine()) != null) {
          if (line.startsWith("at ")) {
            cHandled.set(Long.parseLong(line.substring(3)));
          }
        }
      } catch (java.io.IOException e) {
        // killed
      }
    });
    reader.start();
    try (Ingestor a = instance(props, "a"); Ingestor b = instance(props, "b")) {
      try {
        Await.until(Duration.ofSeconds(120), "all three instances to own partitions and the child to count some",
            () -> a.assignment().size() == 2 && b.assignment().size() == 2 && cHandled.get() > 0,
            () -> "a=" + a.assignment() + " b=" + b.assignment() + " c handled " + cHandled.get() + "; c log: "
                + CrashRestartTest.tail(dir.resolve("c.log")));
      } finally {
        c.destroyForcibly();
        c.waitFor(30, TimeUnit.SECONDS);
      }
      System.out.printf("killed instance c after it handled %d records%n", cHandled.get());
      w.produce(broker, topic, half, w.records.size());
      awaitAllCaughtUp(List.of(a, b), broker.endOffsets(topic), Duration.ofSeconds(120));
      Set<TopicPartition> owned = new HashSet<>(a.assignment());
      owned.addAll(b.assignment());
      assertEquals(6, owned.size(), "the two survivors own all six partitions");
    }
    // The killed child may have left a transaction open on a state partition (killed mid-checkpoint): until
    // the coordinator aborts it, later checkpoints there are committed but hidden; the reader waits for them.
    Map<TopicPartition, PartitionCheckpoint> state = StateTopicReader.read(broker.bootstrapServers(), topic + "-state",
        "g-" + topic, List.of(topic), Map.of());
    assertEquals(6, state.size(), () -> "a checkpoint per partition; found " + state.keySet() + "; child log: "
        + CrashRestartTest.tail(dir.resolve("c.log")));
    Map<TopicPartition, Long> ends = broker.endOffsets(topic);
    state.forEach((tp, cp) -> System.out.printf("state of %s: checkpoint %d, next offset %d of %d, %d baskets%n", tp,
        cp.checkpointId(), cp.nextOffset(), ends.get(tp), Snapshots.read(cp.engine()).stats().baskets()));
    w.assertExact(StateTopicReader.merge(Workload.engineConfig(), state));
    w.assertExactSegments(StateTopicReader.mergeSegments(state));
    Map<DeadLetterReason, Long> byReason = new EnumMap<>(DeadLetterReason.class);
    for (ConsumerRecord<byte[], byte[]> r : KafkaIngestTest.readAll(broker, topic + "-dead-letters")) {
      byReason.merge(DeadLetterReason.fromWireName(new String(r.headers().lastHeader(DeadLetters.REASON).value(),
          StandardCharsets.UTF_8)), 1L, Long::sum);
    }
    assertEquals(w.deadLetters, byReason, "each dead letter exactly once despite the kill");
  }
}
