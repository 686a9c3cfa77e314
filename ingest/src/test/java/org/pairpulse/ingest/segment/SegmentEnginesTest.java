package org.pairpulse.ingest.segment;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * Segment routing against a slow, obvious oracle: per segment, a plain recount of the baskets that carry the
 * value (the first {@code maxValuesPerAttribute} plain values of an attribute, in arrival order).
 */
class SegmentEnginesTest {
  static final EngineConfig CONFIG = EngineConfig.builder()
      .horizons(List.of(HorizonSpec.decay("recent", Duration.ofHours(6)), HorizonSpec.window("day", Duration.ofHours(24), 24)))
      .trackingHorizon("recent").itemError(0.01, 0.05).pairError(0.01, 0.05)
      .trackedItemCapacity(256).trackedPairCapacity(4096).build();
  static final long T0 = 1_796_205_600_000L;

  record Basket(long millis, String[] items, Map<String, String> attributes) {}

  static List<Basket> stream(long seed, int count) {
    Random random = new Random(seed);
    String[] regions = {"north", "south", "east", "west", "far-north", "EU West", "x=y"};
    List<Basket> out = new ArrayList<>();
    for (int i = 0; i < count; i++) {
      int size = 1 + random.nextInt(4);
      String[] items = new String[size];
      for (int k = 0; k < size; k++) {
        items[k] = "item-" + random.nextInt(30);
      }
      Map<String, String> attributes = new HashMap<>();
      if (random.nextInt(4) > 0) {
        attributes.put("region", regions[random.nextInt(regions.length)]);
      }
      if (random.nextBoolean()) {
        attributes.put("plan", random.nextBoolean() ? "prepaid" : "postpaid");
      }
      if (random.nextInt(10) == 0) {
        attributes.put("store", "s-" + random.nextInt(100)); // not configured: never a segment
      }
      out.add(new Basket(T0 + i * 1000L, items, attributes));
    }
    return out;
  }

  /** The oracle: per segment name, the exact pair counts of its baskets. */
  static Map<String, Map<String, Long>> oracle(List<Basket> baskets, List<String> attributes, int maxValues) {
    Map<String, Map<String, Long>> out = new TreeMap<>();
    Map<String, LinkedHashSet<String>> admitted = new HashMap<>();
    for (Basket b : baskets) {
      for (String attribute : attributes) {
        String value = b.attributes().get(attribute);
        if (value == null || !value.matches("[A-Za-z0-9][A-Za-z0-9_.:+-]{0,63}")) {
          continue;
        }
        LinkedHashSet<String> values = admitted.computeIfAbsent(attribute, a -> new LinkedHashSet<>());
        if (!values.contains(value) && values.size() >= maxValues) {
          continue;
        }
        values.add(value);
        Map<String, Long> pairs = out.computeIfAbsent(attribute + "=" + value, k -> new TreeMap<>());
        List<String> distinct = new ArrayList<>(new LinkedHashSet<>(List.of(b.items())));
        pairs.merge("", 1L, Long::sum); // N under the empty key
        for (int x = 0; x < distinct.size(); x++) {
          for (int y = x + 1; y < distinct.size(); y++) {
            String p = distinct.get(x), q = distinct.get(y);
            pairs.merge(p.compareTo(q) < 0 ? p + "|" + q : q + "|" + p, 1L, Long::sum);
          }
        }
      }
    }
    return out;
  }

  @Test
  void countsEachSegmentExactlyAndBoundsTheValuesPerAttribute() {
    List<Basket> baskets = stream(7, 3000);
    SegmentSettings settings = new SegmentSettings(List.of("region", "plan"), 3, 0.5);
    Map<String, Integer> skips = new TreeMap<>();
    SegmentEngines engines = new SegmentEngines(CONFIG, settings,
        (attribute, value, reason) -> skips.merge(attribute + " " + reason.wireName(), 1, Integer::sum));
    PairEngine plain = new PairEngine(CONFIG);
    for (Basket b : baskets) {
      engines.addBasket(b.millis(), b.items(), b.attributes());
      plain.addBasket(b.millis(), b.items());
    }
    Map<String, Map<String, Long>> oracle = oracle(baskets, settings.attributes(), 3);
    assertEquals(oracle.keySet(), engines.segments().keySet(), "segments: the first 3 plain regions and both plans");
    assertEquals(3 + 2, engines.segments().size());
    oracle.forEach((name, pairs) -> {
      PairEngine engine = engines.segments().get(name);
      assertEquals(settings.segmentEngine(CONFIG), engine.config(), "segment engines use the scaled configuration");
      pairs.forEach((key, count) -> {
        if (key.isEmpty()) {
          assertEquals(count, engine.basketCount("day"), 0.0, name + ": N");
        } else {
          String[] ab = key.split("\\|");
          assertTrue(engine.pairCount(ab[0], ab[1], "day").isExact(), name + " " + key);
          assertEquals(count, engine.pairCount(ab[0], ab[1], "day").value(), 0.0, name + ": n_ab of " + key);
        }
      });
    });
    assertArrayEquals(Snapshots.write(plain), Snapshots.write(engines.all()), "segment all counts every basket, as one engine");
    long invalid = baskets.stream().map(b -> b.attributes().get("region"))
        .filter(v -> v != null && (v.contains(" ") || v.contains("="))).count();
    assertEquals((int) invalid, skips.get("region invalid_value"), "values that are not plain names are counted, not dropped");
    long overBound = baskets.stream().map(b -> b.attributes().get("region"))
        .filter(v -> v != null && !v.contains(" ") && !v.contains("=")).filter(v -> !oracle.containsKey("region=" + v)).count();
    assertTrue(overBound > 0, "the stream has more plain regions than the bound");
    assertEquals((int) overBound, skips.get("region over_bound"), "values over the bound are counted, not dropped");
    assertEquals(null, skips.get("plan over_bound"));
  }

  @Test
  void aRestoreDecidesExactlyAsAnUninterruptedRun() {
    List<Basket> baskets = stream(11, 2000);
    SegmentSettings settings = new SegmentSettings(List.of("region"), 2, 0.25);
    SegmentEngines uninterrupted = new SegmentEngines(CONFIG, settings, null);
    SegmentEngines first = new SegmentEngines(CONFIG, settings, null);
    for (int i = 0; i < baskets.size(); i++) {
      Basket b = baskets.get(i);
      uninterrupted.addBasket(b.millis(), b.items(), b.attributes());
      if (i < 700) {
        first.addBasket(b.millis(), b.items(), b.attributes());
      }
    }
    Map<String, PairEngine> restoredSegments = new TreeMap<>();
    first.segments().forEach((name, engine) -> restoredSegments.put(name, Snapshots.read(Snapshots.write(engine))));
    SegmentEngines restored = new SegmentEngines(Snapshots.read(Snapshots.write(first.all())), restoredSegments, settings, null);
    for (Basket b : baskets.subList(700, baskets.size())) {
      restored.addBasket(b.millis(), b.items(), b.attributes());
    }
    assertEquals(uninterrupted.segments().keySet(), restored.segments().keySet());
    assertArrayEquals(Snapshots.write(uninterrupted.all()), Snapshots.write(restored.all()));
    for (String name : uninterrupted.segments().keySet()) {
      assertArrayEquals(Snapshots.write(uninterrupted.segments().get(name)), Snapshots.write(restored.segments().get(name)),
          "segment " + name + " after a restore vs an uninterrupted run");
    }
  }

  @Test
  void restoreDropsUnconfiguredAttributesAndRefusesAnotherConfiguration() {
    SegmentSettings regions = new SegmentSettings(List.of("region"), 4, 0.25);
    PairEngine segment = new PairEngine(regions.segmentEngine(CONFIG));
    Map<String, PairEngine> restored = Map.of("region=north", segment, "plan=prepaid", new PairEngine(regions.segmentEngine(CONFIG)));
    SegmentEngines engines = new SegmentEngines(new PairEngine(CONFIG), restored, regions, null);
    assertEquals(List.of("region=north"), List.copyOf(engines.segments().keySet()));
    assertEquals(List.of("plan=prepaid"), SegmentEngines.droppedOnRestore(restored, regions));
    SegmentSettings wider = new SegmentSettings(List.of("region"), 4, 0.5);
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
        () -> new SegmentEngines(new PairEngine(CONFIG), Map.of("region=north", segment), wider, null));
    assertTrue(e.getMessage().contains("segments.tracked.fraction"), e.getMessage());
  }

  @Test
  void segmentEnginesAreSmallerAndSettingsAreChecked() {
    EngineConfig defaults = EngineConfig.defaults();
    EngineConfig segment = new SegmentSettings(List.of("channel"), 32, 0.25).segmentEngine(defaults);
    assertEquals(defaults.trackedPairCapacity() / 4, segment.trackedPairCapacity());
    assertEquals(defaults.trackedItemCapacity() / 4, segment.trackedItemCapacity());
    assertEquals(defaults.pairEpsilon(), segment.pairEpsilon(), 0.0);
    assertTrue(new PairEngine(segment).stateBytes() < new PairEngine(defaults).stateBytes());
    assertEquals(SegmentSettings.MIN_TRACKED,
        new SegmentSettings(List.of("channel"), 32, 0.001).segmentEngine(defaults).trackedPairCapacity());
    assertEquals(1 + 2 * 32, new SegmentSettings(List.of("channel", "region"), 32, 0.25).maxEnginesPerPartition());
    assertThrows(IllegalArgumentException.class, () -> new SegmentSettings(List.of("a b"), 32, 0.25));
    assertThrows(IllegalArgumentException.class, () -> new SegmentSettings(List.of("a", "a"), 32, 0.25));
    assertThrows(IllegalArgumentException.class, () -> new SegmentSettings(List.of("a"), 0, 0.25));
    assertThrows(IllegalArgumentException.class, () -> new SegmentSettings(List.of("a"), 32, 0));
  }
}
