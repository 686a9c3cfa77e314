package org.pairpulse.ingest.worker;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.Set;
import java.util.SortedMap;
import java.util.concurrent.TimeUnit;
import java.util.stream.Collectors;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ingest.testkit.Workload;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.time.EventClock;

/**
 * Engine lanes against the single engine worker, without Kafka: the same baskets of 6 partitions (with segments by
 * {@code region}) fed to both must give the same partition snapshots, the same merged counts (window counts exactly;
 * decays to a relative 1e-12, the float sums of another merge order), tables for the same segments, and the same
 * state gauges (summed over the lanes). The engines' tracked tables exceed the catalog's pairs, so every count is exact
 * and the merge order cannot change which keys are tracked.
 */
class EngineLanesTest {
  private static final EngineConfig CONFIG = Workload.engineConfig();
  private static final SegmentSettings SEGMENTS = new SegmentSettings(List.of("region"), SegmentSettings.DEFAULT_MAX_VALUES, 0.5);
  private static final String TOPIC = "lanes";
  private static final int PARTITIONS = 6;
  private static final int ITEMS = 40;
  private static final long T0 = 1_796_205_600_000L;
  private static final double DECAY_TOLERANCE = 1e-12;

  @ParameterizedTest(name = "lanes={0}")
  @ValueSource(ints = {1, 3, 4})
  void lanesGiveWhatOneWorkerGives(int laneCount) throws Exception {
    MeterRegistry laneRegistry = new SimpleMeterRegistry();
    MeterRegistry singleRegistry = new SimpleMeterRegistry();
    List<TopicPartition> partitions = new ArrayList<>();
    for (int p = 0; p < PARTITIONS; p++) {
      partitions.add(new TopicPartition(TOPIC, p));
    }
    try (EngineLanes lanes = new EngineLanes(CONFIG, SEGMENTS, new IngestMetrics(laneRegistry, EventClock.system()), true,
            laneCount, 4);
        EngineWorker single = new EngineWorker(CONFIG, SEGMENTS, new IngestMetrics(singleRegistry, EventClock.system()),
            true, 4)) {
      if (laneCount > 1) {
        assertTrue(engineThreadNames().containsAll(Set.of("pairpulse-engine-0", "pairpulse-engine-" + (laneCount - 1))),
            "lane threads are named pairpulse-engine-<lane>: " + engineThreadNames());
      }
      feed(lanes, single, 42);

      Map<TopicPartition, EngineWorker.PartitionSnapshot> fromLanes = lanes.snapshot(partitions).get(60, TimeUnit.SECONDS);
      Map<TopicPartition, EngineWorker.PartitionSnapshot> fromSingle = single.snapshot(partitions).get(60, TimeUnit.SECONDS);
      assertEquals(fromSingle.keySet(), fromLanes.keySet(), "partitions snapshotted");
      for (TopicPartition tp : partitions) {
        assertArrayEquals(fromSingle.get(tp).all(), fromLanes.get(tp).all(), "snapshot of " + tp + " (all)");
        assertEquals(fromSingle.get(tp).segments().keySet(), fromLanes.get(tp).segments().keySet(), "segments of " + tp);
        fromSingle.get(tp).segments().forEach((name, bytes) ->
            assertArrayEquals(bytes, fromLanes.get(tp).segments().get(name), "snapshot of segment " + name + " of " + tp));
      }
      assertArrayEquals(single.read(partitions.get(4), Snapshots::write).get(60, TimeUnit.SECONDS),
          lanes.read(partitions.get(4), Snapshots::write).get(60, TimeUnit.SECONDS), "read of " + partitions.get(4));

      assertSameMerge(single, lanes, laneCount);
      assertSameGauges(singleRegistry, laneRegistry);

      // partitions 1 and 2 leave (on different lanes when there are several); the rest merge as before
      List<TopicPartition> leaving = List.of(partitions.get(1), partitions.get(2));
      lanes.drop(leaving).get(60, TimeUnit.SECONDS);
      single.drop(leaving).get(60, TimeUnit.SECONDS);
      assertSameMerge(single, lanes, laneCount);
      assertSameGauges(singleRegistry, laneRegistry);
      lanes.drain();
      assertNull(lanes.failure(), "no lane failed");
    }
  }

  /**
   * The lanes' gauges report their sum: the segment engines exactly; the state bytes to 1 % (a lane, like the single
   * worker, updates its value when its partitions or segments change, and the tracked keys' labels grow it a little
   * in between, so the lanes' values are of slightly different moments), well apart from one lane's share.
   */
  private static void assertSameGauges(MeterRegistry single, MeterRegistry lanes) {
    assertEquals(single.get(IngestMetrics.PREFIX + "segment.engines").gauge().value(),
        lanes.get(IngestMetrics.PREFIX + "segment.engines").gauge().value(), 0.0, "segment engines: the sum over the lanes");
    double expectedBytes = single.get(IngestMetrics.PREFIX + "state.bytes").gauge().value();
    assertEquals(expectedBytes, lanes.get(IngestMetrics.PREFIX + "state.bytes").gauge().value(), expectedBytes * 0.01,
        "state bytes: the sum over the lanes");
  }

  /**
   * The group view's refresh: lanes that hold partitions 1, 3 and 5 (restored from the single worker's snapshots) and
   * are given 0, 2 and 4 as remote engines (decoded from its snapshots, as another instance's checkpoints are) publish
   * the single worker's tables: the same partitions merged in the same order. The tracked-pair capacity is below the
   * catalog's pairs here, so the merges evict, and the order of merging decides which pairs stay.
   */
  @ParameterizedTest(name = "lanes={0}")
  @ValueSource(ints = {1, 3})
  void aRefreshWithRemotePartitionsPublishesWhatOneWorkerOfAllDoes(int laneCount) throws Exception {
    EngineConfig small = EngineConfig.builder().horizons(CONFIG.horizons()).trackedPairCapacity(96)
        .trackedItemCapacity(24).build();
    List<TopicPartition> partitions = new ArrayList<>();
    for (int p = 0; p < PARTITIONS; p++) {
      partitions.add(new TopicPartition(TOPIC, p));
    }
    try (EngineLanes feeder = new EngineLanes(small, SEGMENTS, new IngestMetrics(new SimpleMeterRegistry(),
            EventClock.system()), true, 1, 4);
        EngineWorker single = new EngineWorker(small, SEGMENTS, new IngestMetrics(new SimpleMeterRegistry(),
            EventClock.system()), true, 4);
        EngineLanes lanes = new EngineLanes(small, SEGMENTS, new IngestMetrics(new SimpleMeterRegistry(),
            EventClock.system()), true, laneCount, 4)) {
      feed(feeder, single, 43);
      Map<TopicPartition, EngineWorker.PartitionSnapshot> snapshots = single.snapshot(partitions).get(60, TimeUnit.SECONDS);
      java.util.SortedMap<TopicPartition, PartitionEngines> remote = new java.util.TreeMap<>(EngineWorker.PARTITION_ORDER);
      for (TopicPartition tp : partitions) {
        EngineWorker.PartitionSnapshot snapshot = snapshots.get(tp);
        java.util.SortedMap<String, PairEngine> segments = new java.util.TreeMap<>();
        snapshot.segments().forEach((name, bytes) -> segments.put(name, Snapshots.read(bytes)));
        if (tp.partition() % 2 == 0) {
          remote.put(tp, new PartitionEngines(Snapshots.read(snapshot.all()), segments));
        } else {
          lanes.restore(tp, Snapshots.read(snapshot.all()), segments).get(60, TimeUnit.SECONDS);
        }
      }
      Map<String, PairTable> expected = single.refresh(7, T0).get(60, TimeUnit.SECONDS);
      Map<String, PairTable> actual = lanes.refresh(7, T0, remote).get(60, TimeUnit.SECONDS);
      assertEquals(List.copyOf(expected.keySet()), List.copyOf(actual.keySet()), "tables of a refresh, in order");
      expected.forEach((name, table) -> {
        PairTable other = actual.get(name);
        assertEquals(table.watermarkMillis(), other.watermarkMillis(), "watermark of table " + name);
        for (String horizon : table.horizonNames()) {
          List<PairStats> want = table.pairs(horizon);
          List<PairStats> got = other.pairs(horizon);
          assertEquals(want.size(), got.size(), "pairs of " + name + " in " + horizon);
          for (int i = 0; i < want.size(); i++) {
            assertEquals(want.get(i).itemA() + "|" + want.get(i).itemB(), got.get(i).itemA() + "|" + got.get(i).itemB(),
                "pair " + i + " of " + name + " in " + horizon);
            assertEquals(want.get(i).counts().countAB().value(), got.get(i).counts().countAB().value(),
                Math.abs(want.get(i).counts().countAB().value()) * DECAY_TOLERANCE, "n_ab of pair " + i + " of " + name);
          }
        }
      });
    }
  }

  /** The merged views and a refresh of the lanes against the single worker's. */
  private static void assertSameMerge(EngineWorker single, EngineLanes lanes, int laneCount) throws Exception {
    PairEngine expected = single.mergedCopy().get(60, TimeUnit.SECONDS);
    PairEngine actual = lanes.mergedCopy().get(60, TimeUnit.SECONDS);
    if (laneCount == 1) {
      assertArrayEquals(Snapshots.write(expected), Snapshots.write(actual), "one lane merges exactly as the worker");
    }
    assertSameCounts(expected, actual, "all");
    SortedMap<String, PairEngine> expectedSegments = single.mergedSegmentCopies().get(60, TimeUnit.SECONDS);
    SortedMap<String, PairEngine> actualSegments = lanes.mergedSegmentCopies().get(60, TimeUnit.SECONDS);
    assertEquals(expectedSegments.keySet(), actualSegments.keySet(), "segments merged");
    expectedSegments.forEach((name, engine) -> assertSameCounts(engine, actualSegments.get(name), "segment " + name));

    Map<String, PairTable> expectedTables = single.refresh(7, T0).get(60, TimeUnit.SECONDS);
    Map<String, PairTable> actualTables = lanes.refresh(7, T0).get(60, TimeUnit.SECONDS);
    assertEquals(List.copyOf(expectedTables.keySet()), List.copyOf(actualTables.keySet()), "tables of a refresh, in order");
    expectedTables.forEach((name, table) -> {
      PairTable other = actualTables.get(name);
      assertEquals(table.version(), other.version(), "version of table " + name);
      assertEquals(table.watermarkMillis(), other.watermarkMillis(), "watermark of table " + name);
      assertEquals(table.pairCount(), other.pairCount(), "pairs of table " + name);
      assertEquals(table.horizon("day").orElseThrow().baskets(), other.horizon("day").orElseThrow().baskets(), 0.0,
          "N of window day in table " + name);
    });
  }

  /** Window counts equal exactly, decay counts to a relative {@link #DECAY_TOLERANCE}. */
  private static void assertSameCounts(PairEngine expected, PairEngine actual, String what) {
    assertEquals(expected.stats().baskets(), actual.stats().baskets(), what + ": baskets");
    assertEquals(expected.watermarkMillis(), actual.watermarkMillis(), what + ": watermark");
    assertEquals(expected.basketCount("day"), actual.basketCount("day"), 0.0, what + ": N of day");
    assertClose(expected.basketCount("recent"), actual.basketCount("recent"), what + ": N of recent");
    for (int a = 0; a < ITEMS; a++) {
      String itemA = "item-" + a;
      assertSame(expected.itemCount(itemA, "day"), actual.itemCount(itemA, "day"), true, what + ": n of " + itemA);
      assertSame(expected.itemCount(itemA, "recent"), actual.itemCount(itemA, "recent"), false, what + ": decayed n of " + itemA);
      for (int b = a + 1; b < ITEMS; b++) {
        String itemB = "item-" + b;
        assertSame(expected.pairCount(itemA, itemB, "day"), actual.pairCount(itemA, itemB, "day"), true,
            what + ": n of " + itemA + "|" + itemB);
        assertSame(expected.pairCount(itemA, itemB, "recent"), actual.pairCount(itemA, itemB, "recent"), false,
            what + ": decayed n of " + itemA + "|" + itemB);
      }
    }
  }

  private static void assertSame(Estimate expected, Estimate actual, boolean window, String what) {
    assertEquals(expected.isExact(), actual.isExact(), what + " exact? " + expected + " vs " + actual);
    if (window) {
      assertEquals(expected, actual, what);
    } else {
      assertClose(expected.value(), actual.value(), what);
      assertClose(expected.lower(), actual.lower(), what + " (lower)");
      assertClose(expected.upper(), actual.upper(), what + " (upper)");
    }
  }

  private static void assertClose(double expected, double actual, String what) {
    assertEquals(expected, actual, Math.abs(expected) * DECAY_TOLERANCE, what);
  }

  /**
   * Feeds the same seeded baskets to both, in batches of random size, the partitions in random turns. Each partition
   * has its own clock offset and runs about 30 h, so windows drop panes and the decays' landmarks differ between
   * partitions (the merge must rescale); half the baskets carry a region.
   */
  private static void feed(EngineLanes lanes, EngineWorker single, long seed) throws InterruptedException {
    Random random = new Random(seed);
    String[] regions = {"north", "south", "east"};
    long[] next = new long[PARTITIONS];
    for (int p = 0; p < PARTITIONS; p++) {
      next[p] = T0 + p * Duration.ofMinutes(37).toMillis();
    }
    long end = T0 + Duration.ofHours(30).toMillis();
    while (true) {
      List<Integer> open = new ArrayList<>();
      for (int p = 0; p < PARTITIONS; p++) {
        if (next[p] < end) {
          open.add(p);
        }
      }
      if (open.isEmpty()) {
        return;
      }
      int p = open.get(random.nextInt(open.size()));
      BasketBatch forLanes = new BasketBatch(8, true);
      BasketBatch forSingle = new BasketBatch(8, true);
      for (int n = 1 + random.nextInt(50); n > 0; n--) {
        List<String> items = new ArrayList<>();
        for (int k = 1 + random.nextInt(5); k > 0; k--) {
          double u = random.nextDouble();
          items.add("item-" + (int) (ITEMS * u * u));
        }
        Map<String, String> attributes = random.nextBoolean() ? Map.of("region", regions[random.nextInt(regions.length)])
            : Map.of();
        String id = "b-" + p + "-" + next[p];
        forLanes.basket(id, next[p], items, attributes);
        forSingle.basket(id, next[p], items, attributes);
        next[p] += 30_000 + random.nextInt(120_000);
      }
      TopicPartition tp = new TopicPartition(TOPIC, p);
      lanes.apply(tp, forLanes);
      single.apply(tp, forSingle);
    }
  }

  private static Set<String> engineThreadNames() {
    return Thread.getAllStackTraces().keySet().stream().map(Thread::getName)
        .filter(name -> name.startsWith("pairpulse-engine")).collect(Collectors.toSet());
  }
}
