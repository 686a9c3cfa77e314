package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.BufferedReader;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.TreeMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.extension.ExtendWith;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.testkit.Await;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.ChildIngest;
import org.pairpulse.ingest.testkit.SharedBroker;
import org.pairpulse.ingest.testkit.TestIngest;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.time.EventClock;

/**
 * kill -9 at a random point, restart, and the final counts equal those of one uninterrupted run: for both
 * checkpoint stores, in segment {@code all} and in every segment {@code region=<value>} (segment attributes are
 * configured, so each checkpoint holds several engines). The instance runs in a child JVM that is destroyed forcibly mid-stream (mid-transaction
 * or mid-file-write, wherever it happens to be); the restart runs in this JVM. With {@code engine.threads=2} the
 * killed and the restarted instance count on two engine lanes, and every partition's engine state still equals that
 * of the uninterrupted run on one; the restarted instance's merged view and published tables hold the exact counts.
 */
@ExtendWith(SharedBroker.class)
class CrashRestartTest {

  @ParameterizedTest(name = "checkpoint.store={0}, engine.threads={1}")
  @CsvSource({"kafka, 1", "local, 1", "kafka, 2"})
  void killedAtARandomPointThenRestartedCountsExactlyOnce(String store, int engineThreads, Broker broker, @TempDir Path dir)
      throws Exception {
    long seed = Long.getLong("crash.seed", System.nanoTime());
    Random random = new Random(seed);
    String topic = "crash-" + store + "-" + engineThreads;
    broker.createTopic(topic, 3, Map.of());
    if (store.equals("kafka")) { // a small message limit forces checkpoints into several chunks
      broker.createTopic(topic + "-state", 3, Map.of("cleanup.policy", "compact", "max.message.bytes", "200000"));
    }
    Workload w = Workload.generate(seed, 3000);
    int firstPart = (int) (w.records.size() * 0.6);
    w.produce(broker, topic, 0, firstPart);
    Map<String, Object> props = TestIngest.withSegments(TestIngest.props(broker, topic, store));
    props.put(IngestConfig.INSTANCE_ID, "crashy");
    props.put(IngestConfig.CHECKPOINT_DIR, dir.resolve("checkpoints").toString());
    props.put(IngestConfig.CHECKPOINT_INTERVAL_BASKETS, "150");
    props.put(IngestConfig.ENGINE_THREAD, Boolean.toString(engineThreads > 1 || random.nextBoolean()));
    props.put(IngestConfig.ENGINE_THREADS, Integer.toString(engineThreads));
    props.put("kafka.consumer.max.poll.records", "25");
    Path propsFile = dir.resolve("child.properties");
    ChildIngest.write(props, propsFile);
    long killAt = 100 + random.nextInt(firstPart - 200);
    System.out.printf("crash test %s, %d engine threads: seed %d, kill after %d of %d records%n", store, engineThreads, seed,
        killAt, firstPart);

    Process child = ChildIngest.launch(propsFile, dir.resolve("child.log"));
    AtomicLong seen = new AtomicLong();
    Thread reader = new Thread(() -> {
      try (BufferedReader lines = new BufferedReader(new InputStreamReader(child.getInputStream(), StandardCharsets.UTF_8))) {
        String line;
        while ((line = lines.readLine()) != null) {
          if (line.startsWith("at ")) {
            seen.set(Long.parseLong(line.substring(3)));
          }
        }
      } catch (java.io.IOException e) {
        // the child was killed
      }
    });
    reader.start();
    try {
      Await.until(Duration.ofSeconds(120), "the child to handle " + killAt + " records", () -> seen.get() >= killAt || !child.isAlive(),
          () -> seen.get() + " records; child log: " + tail(dir.resolve("child.log")));
      assertTrue(child.isAlive(), "the child stopped before the kill: " + tail(dir.resolve("child.log")));
    } finally {
      child.destroyForcibly();
      child.waitFor(30, TimeUnit.SECONDS);
    }
    System.out.printf("killed the child at %d records%n", seen.get());
    w.produce(broker, topic, firstPart, w.records.size());
    Map<TopicPartition, Long> ends = broker.endOffsets(topic);
    try (Ingestor restarted = new Ingestor(new IngestConfig(props), Workload.engineConfig(), new SimpleMeterRegistry(),
        EventClock.system()).start()) {
      TestIngest.awaitCaughtUp(restarted, ends, Duration.ofSeconds(120));
      if (seen.get() > 300) {
        Await.until(Duration.ofSeconds(60), "a restore from a checkpoint", () -> restarted.metrics().restoreCount() > 0,
            () -> "restores " + restarted.metrics().restoreCount());
      }
      w.assertExact(restarted.view().get(120, TimeUnit.SECONDS));
      w.assertExactSegments(restarted.segmentViews().get(120, TimeUnit.SECONDS));
      Await.until(Duration.ofSeconds(60), "a published pair table with every basket and one per segment",
          () -> restarted.pairTables().current().horizon("day").map(h -> h.baskets()).orElse(0.0) >= w.baskets
              && restarted.segmentTables().keySet().equals(w.segments.keySet()),
          () -> "N " + restarted.pairTables().current().horizon("day").map(h -> h.baskets()) + ", segments "
              + restarted.segmentTables().keySet());
      assertEquals(w.baskets, restarted.pairTables().current().horizon("day").map(h -> h.baskets()).orElse(0.0), 0.0,
          "N of the published pair table");
    }
    Map<TopicPartition, PartitionCheckpoint> crashed = state(broker, store, topic, "g-" + topic, dir.resolve("checkpoints"));
    assertEquals(3, crashed.size());
    w.assertExact(StateTopicReader.merge(Workload.engineConfig(), crashed));
    w.assertExactSegments(StateTopicReader.mergeSegments(crashed));

    // one uninterrupted run over the same input, for the engine state of every partition
    Map<String, Object> ref = TestIngest.withSegments(TestIngest.props(broker, topic, store));
    ref.put(IngestConfig.GROUP_ID, "ref-" + topic);
    ref.put(IngestConfig.STATE_TOPIC, topic + "-ref-state");
    ref.put(IngestConfig.DEAD_LETTER_TOPIC, topic + "-ref-dead-letters");
    ref.put(IngestConfig.CHECKPOINT_DIR, dir.resolve("ref").toString());
    ref.put(IngestConfig.CHECKPOINT_INTERVAL_MS, "5000");
    try (Ingestor uninterrupted = new Ingestor(new IngestConfig(ref), Workload.engineConfig(), new SimpleMeterRegistry(),
        EventClock.system()).start()) {
      TestIngest.awaitCaughtUp(uninterrupted, ends, Duration.ofSeconds(120));
    }
    Map<TopicPartition, PartitionCheckpoint> reference = state(broker, store, topic, "ref-" + topic, dir.resolve("ref"));
    PairEngine referenceMerged = StateTopicReader.merge(Workload.engineConfig(), reference);
    w.assertExact(referenceMerged);
    w.assertExactSegments(StateTopicReader.mergeSegments(reference));
    for (TopicPartition tp : reference.keySet()) {
      assertEquals(reference.get(tp).nextOffset(), crashed.get(tp).nextOffset(), "offset covered of " + tp);
      assertArrayEquals(reference.get(tp).engine(), crashed.get(tp).engine(),
          "engine state of " + tp + " after kill and restart vs one uninterrupted run (decayed horizons included)");
      assertEquals(reference.get(tp).segments().keySet(), crashed.get(tp).segments().keySet(), "segments of " + tp);
      for (String segment : reference.get(tp).segments().keySet()) {
        assertArrayEquals(reference.get(tp).segments().get(segment), crashed.get(tp).segments().get(segment),
            "engine state of segment " + segment + " of " + tp + " after kill and restart vs one uninterrupted run");
      }
    }
    if (store.equals("kafka")) { // dead letters too are published exactly once
      Map<DeadLetterReason, Long> byReason = new EnumMap<>(DeadLetterReason.class);
      for (ConsumerRecord<byte[], byte[]> r : KafkaIngestTest.readAll(broker, topic + "-dead-letters")) {
        byReason.merge(DeadLetterReason.fromWireName(new String(r.headers().lastHeader(DeadLetters.REASON).value(),
            StandardCharsets.UTF_8)), 1L, Long::sum);
      }
      assertEquals(w.deadLetters, byReason, "dead letters after kill and restart, per reason (read_committed)");
    }
  }

  static Map<TopicPartition, PartitionCheckpoint> state(Broker broker, String store, String topic, String group, Path dir) {
    if (store.equals("kafka")) {
      return StateTopicReader.read(broker.bootstrapServers(), group.startsWith("ref-") ? topic + "-ref-state" : topic + "-state",
          group, List.of(topic), Map.of());
    }
    LocalDirectoryStore local = new LocalDirectoryStore(dir);
    Map<TopicPartition, PartitionCheckpoint> out = new TreeMap<>((a, b) -> Integer.compare(a.partition(), b.partition()));
    for (int p = 0; p < 3; p++) {
      int partition = p;
      local.load(topic, p).ifPresent(cp -> out.put(new TopicPartition(topic, partition), cp));
    }
    return out;
  }

  static String tail(Path log) {
    try {
      List<String> lines = Files.readAllLines(log);
      return String.join("\n", lines.subList(Math.max(0, lines.size() - 15), lines.size()));
    } catch (java.io.IOException e) {
      return "(no log)";
    }
  }
}
