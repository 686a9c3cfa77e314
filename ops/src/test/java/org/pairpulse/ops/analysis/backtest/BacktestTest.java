package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.MainTestAccess;
import org.pairpulse.ops.MainTestAccess.Run;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.evaluation.Trial;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.engine.EngineConfig;

/** The replay: deterministic output, test-then-train order, the nightly baseline's daily rebuild. */
class BacktestTest {
  static final long DAY = Duration.ofDays(1).toMillis();
  static final long MINUTE = 60_000;

  @TempDir
  static Path directory;

  /** A small engine: the replay logic does not depend on the capacity, and refreshes stay cheap. */
  static final EngineConfig SMALL = EngineConfig.builder().trackedPairCapacity(512).trackedItemCapacity(512).build();

  @BeforeAll
  static void writeScenario() throws IOException {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(3).withBasketsPerMinute(2)),
        directory.resolve("scenario"));
    Files.writeString(directory.resolve("small.properties"), String.join("\n",
        "engine.tracked.pair.capacity=512", "engine.tracked.item.capacity=512", "drift.min.dwell.ms=600000", ""));
  }

  static Run cli(String... args) {
    return MainTestAccess.run(args);
  }

  @Test
  void twoRunsWriteByteIdenticalJson() throws IOException {
    Path scenario = directory.resolve("scenario");
    List<byte[]> outputs = new ArrayList<>();
    for (String out : List.of("run1", "run2")) {
      Run run = cli("backtest", "--input", scenario.resolve(ScenarioFiles.JSON_LINES_FILE).toString(), "--config",
          directory.resolve("small.properties").toString(), "--ground-truth",
          scenario.resolve(ScenarioFiles.GROUND_TRUTH_FILE).toString(), "--refresh-every", "1h", "--summary-every", "1d",
          "--eval-share", "0.2", "--floor", "10", "--quiet", "--out", directory.resolve(out).toString());
      assertEquals(Main.EXIT_OK, run.exitCode(), run.err());
      assertTrue(run.out().contains("backtest baskets.jsonl:"), run.out());
      assertTrue(run.out().contains("evaluation (test-then-train"), run.out());
      // the scenario spans days: each method is also scored from the second day on, when the nightly table is real
      assertTrue(run.out().contains("the first day's nightly table is nearly empty"), run.out());
      outputs.add(Files.readAllBytes(directory.resolve(out).resolve(BacktestRun.JSON_FILE)));
    }
    assertArrayEquals(outputs.get(0), outputs.get(1));

    JsonNode json = new ObjectMapper().readTree(outputs.get(0));
    assertEquals(BacktestJson.FORMAT, json.get("format").asText());
    assertEquals(3_600_000, json.at("/settings/refreshEveryMillis").asLong());
    assertEquals(512, json.at("/settings/engine/trackedPairCapacity").asInt());
    assertEquals(600_000, json.at("/settings/drift/minDwellMillis").asLong(), "from the settings file");
    assertEquals(json.at("/input/baskets").asLong(), json.at("/replay/baskets").asLong());
    assertTrue(json.at("/replay/baskets").asLong() > 8000);
    assertEquals(4, json.get("summaries").size(), "days 0, 1, 2 and the end");
    assertTrue(json.at("/summaries/3/top/baseline").size() > 0);
    assertEquals(3, json.at("/evaluation/days").size());
    assertTrue(json.at("/evaluation/overall/incremental/trials").asLong() > 500);
    assertTrue(json.at("/evaluation/overall/popular/hitAt/10").asDouble() > 0);
    assertEquals(0, json.at("/detection/planted").asInt(), "the 3-day scenario has no planted change inside");
  }

  @Test
  void aBasketIsTestedBeforeItTrains() {
    // the association ranking: its answers come from pairs only, so a rank > 0 would show that the table knew the
    // pair (the posterior ranking also answers from popularity: x would be found for {z} without the pair)
    BacktestSettings settings = BacktestSettings.builder().engine(SMALL).cohortFloor(0).refreshEveryMillis(MINUTE)
        .evaluation(EvaluationSettings.defaults().withShare(1.0).withRanking(SuggestionRanking.ASSOCIATION)).build();
    List<Trial> trials = new ArrayList<>();
    Backtest backtest = new Backtest(settings, new Backtest.Listener() {
      @Override
      public void trial(Trial trial) {
        trials.add(trial);
      }
    }, null);
    long t0 = ScenarioConfig.DEFAULT_START.toEpochMilli();
    // background: other 2-item baskets, so that {x, y} is a real association within its size class (the
    // association ranking lists only pairs that pass the offer screen)
    for (int i = 0; i < 30; i++) {
      backtest.accept(new ReplayBasket("bg" + i, t0 + 100 + i, List.of("u" + i, "v" + i), Map.of()));
    }
    // the same new pair three times in the same minute, then once more a minute later
    backtest.accept(new ReplayBasket("b1", t0, List.of("x", "y"), Map.of()));
    backtest.accept(new ReplayBasket("b2", t0 + 1000, List.of("x", "y"), Map.of()));
    backtest.accept(new ReplayBasket("b3", t0 + 2000, List.of("x", "y"), Map.of()));
    backtest.accept(new ReplayBasket("b4", t0 + MINUTE, List.of("x", "y"), Map.of()));
    // a pair never seen before: the refresh at its own minute must not know it yet
    backtest.accept(new ReplayBasket("b5", t0 + 2 * MINUTE, List.of("x", "z"), Map.of()));
    BacktestResult result = backtest.finish();
    trials.removeIf(trial -> trial.basketId().startsWith("bg"));
    assertEquals(5, trials.size());
    // within the first minute the table is the one refreshed at t0, before any basket: nothing to suggest
    for (int i = 0; i < 3; i++) {
      assertEquals(0, trials.get(i).incrementalRank(), trials.get(i).toString());
      assertEquals(1, trials.get(i).incrementalVersion());
    }
    // the basket of the next minute sees the three before it, not itself
    assertEquals(2, trials.get(3).incrementalVersion());
    assertEquals(1, trials.get(3).incrementalRank());
    assertEquals(3, trials.get(4).incrementalVersion());
    assertEquals(0, trials.get(4).incrementalRank(), "{x, z} is tested before it trains");
    assertEquals(35, result.baskets());
    assertEquals(4, result.refreshes(), "t0, t0 + 1 min, t0 + 2 min and the end");
  }

  @Test
  void theNightlyTableChangesOncePerSimulatedDay() throws IOException {
    BacktestSettings settings = BacktestSettings.builder().engine(SMALL).cohortFloor(10)
        .refreshEveryMillis(60 * MINUTE).evaluation(EvaluationSettings.defaults().withShare(0.05)).build();
    Map<Long, Set<Long>> nightlyVersionsByDay = new TreeMap<>();
    Map<Long, Set<Long>> incrementalVersionsByDay = new TreeMap<>();
    Backtest.Listener listener = new Backtest.Listener() {
      @Override
      public void trial(Trial trial) {
        long day = Math.floorDiv(trial.eventMillis(), DAY);
        nightlyVersionsByDay.computeIfAbsent(day, d -> new HashSet<>()).add(trial.nightlyVersion());
        incrementalVersionsByDay.computeIfAbsent(day, d -> new HashSet<>()).add(trial.incrementalVersion());
      }
    };
    BacktestRun run = BacktestRun.run(directory.resolve("scenario").resolve(ScenarioFiles.CSV_FILE), settings, null,
        null, listener, null);
    assertEquals(3, nightlyVersionsByDay.size());
    Set<Long> seen = new HashSet<>();
    for (Map.Entry<Long, Set<Long>> day : nightlyVersionsByDay.entrySet()) {
      assertEquals(1, day.getValue().size(), "one nightly table on day " + day.getKey());
      assertTrue(seen.add(day.getValue().iterator().next()), "a new nightly table every day");
      assertTrue(incrementalVersionsByDay.get(day.getKey()).size() > 12, "the incremental table changes all day");
    }
    assertEquals(3, run.result().nightlyRebuilds());
    assertNotEquals(0, run.result().refreshes());
  }
}
