package org.pairpulse.ops.backtest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.Reader;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.run.RunConfig;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.sketch.horizon.HorizonSpec;

/** The backtest's settings file reads the run configuration's file: one file serves a production run and its replay. */
class SettingsFileTest {

  @Test
  void theRunConfigurationExampleIsAValidBacktestSettingsFile() throws IOException {
    Path example = Path.of("config", "pairpulse.example.properties");
    // what 'pairpulse run --config' reads; its secret references (${env:…}) stand in for values set at deployment
    Properties properties = new Properties();
    try (Reader reader = Files.newBufferedReader(example)) {
      properties.load(reader);
    }
    Map<String, String> raw = new TreeMap<>();
    for (String name : properties.stringPropertyNames()) {
      String value = properties.getProperty(name);
      raw.put(name, value.contains("${") ? "set-at-deployment-0123456789" : value);
    }
    RunConfig run = RunConfig.of(raw, example.toString());
    List<String> notes = new ArrayList<>();
    BacktestSettings settings = SettingsFile.read(example, BacktestSettings.defaults(), notes::add);
    // the engine and its horizons are the run's
    assertEquals(run.engine().horizons(), settings.engine().horizons());
    assertEquals(run.engine().trackedPairCapacity(), settings.engine().trackedPairCapacity());
    assertEquals(run.engine().pairEpsilon(), settings.engine().pairEpsilon());
    assertEquals(run.serve().driftSettings(), settings.drift());
    // the run-only keys present are named in a note, nothing else is
    for (String note : notes) {
      assertTrue(SettingsFile.RUN_ONLY_KEYS.stream().anyMatch(note::contains), note);
    }
  }

  @Test
  void horizonKeysChangeTheEngineAndRunOnlyKeysAreNoted() {
    List<String> notes = new ArrayList<>();
    BacktestSettings settings = SettingsFile.apply(Map.of("horizon.recent.half.life.ms", "7200000",
        "horizon.day.length.ms", "43200000", "horizon.day.panes", "12", "run.sketch.health.interval.ms", "60000",
        "evaluation.ranking", "association"), BacktestSettings.defaults(), notes::add);
    List<HorizonSpec> horizons = settings.engine().horizons();
    assertEquals(HorizonSpec.decay("recent", Duration.ofHours(2)), horizons.get(0));
    assertEquals(HorizonSpec.window("day", Duration.ofHours(12), 12), horizons.get(1));
    assertEquals(HorizonSpec.BASELINE, horizons.get(2));
    assertEquals(SuggestionRanking.ASSOCIATION, settings.evaluation().ranking());
    assertEquals(List.of("ignoring 'run.sketch.health.interval.ms': only 'pairpulse run' uses it"), notes);
  }

  @Test
  void unknownKeysAndBadValuesAreErrorsThatNameThem() {
    IllegalArgumentException typo = assertThrows(IllegalArgumentException.class,
        () -> SettingsFile.apply(Map.of("horizon.recent.halflife", "1"), BacktestSettings.defaults()));
    assertTrue(typo.getMessage().contains("horizon.recent.halflife"), typo.getMessage());
    IllegalArgumentException bad = assertThrows(IllegalArgumentException.class,
        () -> SettingsFile.apply(Map.of("horizon.day.panes", "many"), BacktestSettings.defaults()));
    assertTrue(bad.getMessage().contains("horizon.day.panes"), bad.getMessage());
    IllegalArgumentException ranking = assertThrows(IllegalArgumentException.class,
        () -> SettingsFile.apply(Map.of("evaluation.ranking", "popular"), BacktestSettings.defaults()));
    assertTrue(ranking.getMessage().contains("posterior"), ranking.getMessage());
  }

  @Test
  void aFileWithRunKeysReadsWithNotes(@TempDir Path directory) throws IOException {
    Path file = directory.resolve("both.properties");
    Files.writeString(file, "run.sketch.health.interval.ms=60000\ndrift.min.dwell.ms=0\n");
    List<String> notes = new ArrayList<>();
    BacktestSettings settings = SettingsFile.read(file, BacktestSettings.defaults(), notes::add);
    assertEquals(0, settings.drift().minDwellMillis());
    assertEquals(1, notes.size());
    assertTrue(notes.get(0).contains("run.sketch.health.interval.ms"), notes.get(0));
  }
}
