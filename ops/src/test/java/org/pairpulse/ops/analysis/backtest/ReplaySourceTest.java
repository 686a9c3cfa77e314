package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;

/** The replay source reads files through ingest's file source, and carries ids and attributes. */
class ReplaySourceTest {
  @TempDir
  static Path directory;

  static final EngineConfig SMALL = EngineConfig.builder().trackedPairCapacity(512).trackedItemCapacity(512).build();

  @BeforeAll
  static void writeScenario() throws IOException {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(1).withBasketsPerMinute(1)),
        directory);
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {ScenarioFiles.JSON_LINES_FILE, ScenarioFiles.CSV_FILE})
  void givesTheEngineTheSameBasketsAsIngestsFileSource(String name) throws IOException {
    Path file = directory.resolve(name);
    BacktestSettings settings = BacktestSettings.defaults();
    PairEngine viaIngest = new PairEngine(SMALL);
    FileSource.Result expected = new FileSource(settings.limits(), settings.front(), viaIngest, null).read(file, null);
    PairEngine viaReplay = new PairEngine(SMALL);
    List<ReplayBasket> baskets = new ArrayList<>();
    FileSource.Result actual = new ReplaySource(settings.limits(), settings.front()).read(file, null, basket -> {
      baskets.add(basket);
      viaReplay.addBasket(basket.eventMillis(), basket.items());
    });
    assertEquals(expected, actual);
    assertTrue(actual.baskets() > 1000, "baskets " + actual.baskets());
    assertArrayEquals(Snapshots.write(viaIngest), Snapshots.write(viaReplay));
    assertEquals("kc-000000001", baskets.get(0).id());
    if (name.equals(ScenarioFiles.JSON_LINES_FILE)) {
      assertEquals(List.of("channel", "region"), baskets.get(0).attributes().keySet().stream().sorted().toList());
    } else {
      assertEquals(Map.of(), baskets.get(0).attributes(), "CSV line items carry no attributes");
    }
  }

  @Test
  void countsDeadLettersAndDuplicatesLikeIngest() throws IOException {
    Path file = directory.resolve("mixed.jsonl");
    Files.writeString(file, String.join("\n",
        "{\"id\":\"b1\",\"time\":1000,\"items\":[\"x\",\"y\"],\"attributes\":{\"channel\":\"app\"}}",
        "{\"id\":\"b1\",\"time\":1000,\"items\":[\"x\",\"y\"]}",
        "not json",
        "{\"basket_id\":\"b2\",\"timestamp\":2000,\"items\":[\"x\"]}",
        "{\"basket\":\"l1\",\"time\":3000,\"item\":\"x\"}",
        "{\"basket\":\"l1\",\"time\":3000,\"item\":\"z\",\"end\":true}",
        "{\"id\":\"b3\",\"time\":4000,\"items\":[\"y\"]}", ""), StandardCharsets.UTF_8);
    List<ReplayBasket> baskets = new ArrayList<>();
    BacktestSettings settings = BacktestSettings.defaults();
    FileSource.Result result = new ReplaySource(settings.limits(), settings.front()).read(file, null, baskets::add);
    assertEquals(3, result.baskets());
    assertEquals(1, result.duplicates());
    assertEquals(Map.of(DeadLetterReason.MALFORMED, 1L, DeadLetterReason.MISSING_FIELD, 1L), result.deadLetters());
    assertEquals(List.of("b1", "l1", "b3"), baskets.stream().map(ReplayBasket::id).toList());
    assertEquals(Map.of("channel", "app"), baskets.get(0).attributes());
    assertEquals(List.of("x", "z"), baskets.get(1).items());
    assertEquals(Map.of(), baskets.get(1).attributes());
  }
}
