package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.header.Header;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.testkit.Await;
import org.pairpulse.ingest.testkit.Broker;
import org.pairpulse.ingest.testkit.SharedBroker;
import org.pairpulse.ingest.testkit.TestIngest;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.time.EventClock;

/** One instance over a topic full of good, duplicate, late and poison records, on the real broker. */
@ExtendWith(SharedBroker.class)
class KafkaIngestTest {

  @Test
  void countsEveryGoodBasketOnceAndDeadLettersTheRestWithTheirReasons(Broker broker) throws Exception {
    String topic = "basic";
    broker.createTopic(topic, 3, Map.of());
    Workload w = Workload.generate(11, 2000);
    w.produce(broker, topic, 0, w.records.size());
    SimpleMeterRegistry registry = new SimpleMeterRegistry();
    Map<TopicPartition, Long> ends = broker.endOffsets(topic);
    try (Ingestor ingestor = new Ingestor(new IngestConfig(TestIngest.props(broker, topic, "kafka")), Workload.engineConfig(),
        registry, EventClock.system()).start()) {
      long t0 = System.nanoTime();
      TestIngest.awaitCaughtUp(ingestor, ends, Duration.ofSeconds(120));
      System.out.printf("caught up in %d ms%n", (System.nanoTime() - t0) / 1_000_000);
      PairEngine view = ingestor.view().get(120, TimeUnit.SECONDS);
      w.assertExact(view);
      for (DeadLetterReason reason : DeadLetterReason.values()) {
        assertEquals(w.deadLetters.getOrDefault(reason, 0L), ingestor.metrics().deadLetterCount(reason), 0.0,
            "dead letters counted with reason " + reason.wireName());
      }
      assertEquals(w.duplicates, ingestor.metrics().duplicateCount(), 0.0, "duplicates counted");
      assertEquals(w.deadLetters.getOrDefault(DeadLetterReason.LATE, 0L), ingestor.metrics().lateCount(), 0.0, "late events");
      assertEquals(w.records.size(), ingestor.metrics().recordCount(), 0.0, "records read");
      assertEquals(w.baskets, ingestor.metrics().basketCount(), 0.0, "baskets counted (metric)");
      Await.until(Duration.ofSeconds(60), "a lag gauge per partition, at 0",
          () -> registry.find("pairpulse.ingest.lag").gauges().size() == 3
              && registry.find("pairpulse.ingest.lag").gauges().stream().allMatch(g -> g.value() == 0),
          () -> registry.find("pairpulse.ingest.lag").gauges().toString());
      // a refresh publishes a pair table of what was read
      Await.until(Duration.ofSeconds(60), "a published pair table with every basket",
          () -> ingestor.pairTables().current().horizon("day").map(h -> h.baskets()).orElse(0.0) >= w.baskets,
          () -> "N of the current table " + ingestor.pairTables().current().horizon("day").map(h -> h.baskets()));
      PairTable table = ingestor.pairTables().current();
      assertEquals(w.baskets, table.horizon("day").map(h -> h.baskets()).orElse(0.0), 0.0, "N of the published pair table");
      Timer refreshes = registry.get(IngestMetrics.REFRESH_DURATION).timer();
      assertTrue(refreshes.count() >= table.version(), "every published table's refresh is timed: " + refreshes.count()
          + " timed, table version " + table.version());
      assertTrue(refreshes.totalTime(TimeUnit.NANOSECONDS) > 0);
    }
    // the dead letters: original bytes and headers, plus the reason header; exactly once each (read_committed)
    Map<DeadLetterReason, Long> byReason = new EnumMap<>(DeadLetterReason.class);
    Set<String> produced = new HashSet<>();
    w.records.forEach(r -> produced.add(new String(r.value(), StandardCharsets.UTF_8)));
    for (ConsumerRecord<byte[], byte[]> r : readAll(broker, topic + "-dead-letters")) {
      Header reason = r.headers().lastHeader(DeadLetters.REASON);
      assertNotNull(reason, "dead letter without a reason header");
      byReason.merge(DeadLetterReason.fromWireName(new String(reason.value(), StandardCharsets.UTF_8)), 1L, Long::sum);
      assertTrue(produced.contains(new String(r.value(), StandardCharsets.UTF_8)), "dead letter value is an original record");
      assertNotNull(r.headers().lastHeader(DeadLetters.SOURCE_OFFSET), "source offset header");
      assertNotNull(r.headers().lastHeader(DeadLetters.DETAIL), "detail header");
      if (!DeadLetterReason.LATE.wireName().equals(new String(reason.value(), StandardCharsets.UTF_8))) {
        assertNotNull(r.headers().lastHeader("origin"), "the poison record's own header is kept");
      }
    }
    assertEquals(w.deadLetters, byReason, "dead letters on the topic, per reason");
    // the state topic holds the group's state: merging it gives the same exact counts
    Map<TopicPartition, PartitionCheckpoint> checkpoints = StateTopicReader.read(broker.bootstrapServers(), topic + "-state",
        "g-" + topic, List.of(topic), Map.of());
    assertEquals(3, checkpoints.size(), "one checkpoint per partition");
    checkpoints.forEach((tp, cp) -> assertEquals(ends.get(tp), cp.nextOffset(), "checkpoint of " + tp + " covers its input"));
    w.assertExact(StateTopicReader.merge(Workload.engineConfig(), checkpoints));
  }

  static List<ConsumerRecord<byte[], byte[]>> readAll(Broker broker, String topic) {
    List<ConsumerRecord<byte[], byte[]>> out = new ArrayList<>();
    Map<TopicPartition, Long> ends = broker.endOffsets(topic);
    try (KafkaConsumer<byte[], byte[]> reader = broker.reader()) {
      reader.assign(ends.keySet());
      reader.seekToBeginning(ends.keySet());
      long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(120);
      while (ends.entrySet().stream().anyMatch(e -> reader.position(e.getKey()) < e.getValue())) {
        if (System.nanoTime() > deadline) {
          throw new AssertionError("timed out after 120 s reading " + topic + " up to " + ends + "; read " + out.size());
        }
        reader.poll(Duration.ofMillis(200)).forEach(out::add);
      }
    }
    return out;
  }
}
