package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigException;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairRanking;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.SizeClasses;

/** The engine's and horizons' keys: their defaults are the engine's, each value is range-checked, each applies. */
class EngineKeysTest {

  @Test
  void theDefinitionsDefaultsAreTheEnginesDefaults() {
    Map<String, Object> every = new HashMap<>();
    for (ConfigDef.ConfigKey key : EngineKeys.DEFINITION.configKeys().values()) {
      every.put(key.name, ConfigDef.convertToString(key.defaultValue, key.type));
    }
    assertEquals(EngineConfig.defaults(), EngineKeys.apply(EngineConfig.defaults(), every),
        "every key at its default changes nothing");
    assertSame(HorizonSpec.DAY, EngineKeys.apply(EngineConfig.defaults(), Map.of()).horizons().get(1));
  }

  @Test
  void eachKeyReachesTheEngine() {
    Map<String, String> given = new HashMap<>();
    given.put(EngineKeys.ITEM_EPSILON, "0.004");
    given.put(EngineKeys.ITEM_DELTA, "0.05");
    given.put(EngineKeys.PAIR_EPSILON, "0.002");
    given.put(EngineKeys.PAIR_DELTA, "0.01");
    given.put(EngineKeys.DECAY_PAIR_EPSILON, "0.0002");
    given.put(EngineKeys.TRACKED_PAIR_CAPACITY, "1024");
    given.put(EngineKeys.TRACKED_ITEM_CAPACITY, "512");
    given.put(EngineKeys.MAX_PAIRS_PER_BASKET, "64");
    given.put(EngineKeys.TRACKING_HALF_LIFE_MS, "86400000");
    given.put(EngineKeys.SEED, "42");
    given.put(EngineKeys.SIZE_CLASSES, "1,2,3+");
    given.put(EngineKeys.PAIR_RANKING, "count");
    given.put(EngineKeys.RECENT_HALF_LIFE_MS, "7200000");
    given.put(EngineKeys.DAY_LENGTH_MS, "43200000");
    given.put(EngineKeys.DAY_PANES, "12");
    given.put(EngineKeys.BASELINE_LENGTH_MS, "1209600000");
    given.put(EngineKeys.BASELINE_PANES, "14");
    given.put("bootstrap.servers", "another part's key, ignored");
    assertEquals(EngineKeys.DEFINITION.names().size() + 1, given.size(), "a value for every key");
    EngineConfig engine = EngineKeys.apply(EngineConfig.defaults(), given);
    EngineConfig expected = EngineConfig.defaults().toBuilder().itemError(0.004, 0.05).pairError(0.002, 0.01)
        .decayPairEpsilon(0.0002).trackedPairCapacity(1024).trackedItemCapacity(512).maxPairsPerBasket(64)
        .trackingHalfLifeMillis(86_400_000L).seed(42).sizeClasses(SizeClasses.parse("1,2,3+"))
        .pairRanking(PairRanking.COUNT).horizons(List.of(HorizonSpec.decay("recent", Duration.ofHours(2)),
            HorizonSpec.window("day", Duration.ofHours(12), 12), HorizonSpec.window("baseline", Duration.ofDays(14), 14)))
        .build();
    assertEquals(expected, engine);
  }

  @Test
  void badValuesNameTheKeyAndRulesBetweenKeysAreTheEngines() {
    for (Map.Entry<String, String> bad : Map.of(EngineKeys.PAIR_EPSILON, "1", EngineKeys.ITEM_DELTA, "NaN",
        EngineKeys.TRACKED_PAIR_CAPACITY, "1", EngineKeys.DAY_PANES, "513", EngineKeys.SIZE_CLASSES, "2,3+",
        EngineKeys.PAIR_RANKING, "random", EngineKeys.RECENT_HALF_LIFE_MS, "999").entrySet()) {
      ConfigException e = assertThrows(ConfigException.class,
          () -> EngineKeys.apply(EngineConfig.defaults(), Map.of(bad.getKey(), bad.getValue())), bad.toString());
      assertTrue(e.getMessage().contains(bad.getKey()), e.getMessage());
    }
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
        () -> EngineKeys.apply(EngineConfig.defaults(), Map.of(EngineKeys.DAY_PANES, "7")));
    assertTrue(e.getMessage().contains("multiple of paneCount 7"), e.getMessage());
    EngineConfig noDay = EngineConfig.defaults().toBuilder().horizons(List.of(HorizonSpec.RECENT)).build();
    e = assertThrows(IllegalArgumentException.class, () -> EngineKeys.apply(noDay, Map.of(EngineKeys.DAY_PANES, "12")));
    assertEquals("horizon.day.panes: the engine has no horizon 'day'", e.getMessage());
  }

  @Test
  void earlierSpellingsNameKeysAndKeysAreDottedLowerCase() {
    EngineKeys.RENAMED.forEach((old, now) -> assertTrue(EngineKeys.DEFINITION.names().contains(now), old));
    assertEquals(14, EngineKeys.RENAMED.size());
    for (String name : EngineKeys.DEFINITION.names()) {
      assertTrue(name.matches("(engine|horizon)(\\.[a-z0-9]+)+"), name);
    }
  }
}
