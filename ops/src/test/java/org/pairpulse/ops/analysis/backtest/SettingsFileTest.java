package org.pairpulse.ops.analysis.backtest;

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
import org.apache.kafka.common.config.ConfigDef;
import org.pairpulse.ops.product.evaluation.EvaluationKeys;
import org.pairpulse.ops.product.run.ConfigParts;
import org.pairpulse.ops.product.run.RunConfig;
import org.pairpulse.ops.product.run.RunConfigException;
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
  void aRefreshIntervalLongerThanTheDefaultSummaryIntervalTakesTheSummaryWithIt() {
    // as --refresh-every 12h does on the command line: the summary interval (default 6 h) follows up to 12 h
    BacktestSettings longRefresh = SettingsFile.apply(Map.of("backtest.refresh.every.ms", "43200000"),
        BacktestSettings.defaults());
    assertEquals(43_200_000L, longRefresh.refreshEveryMillis());
    assertEquals(43_200_000L, longRefresh.summaryEveryMillis());
    // a summary interval that is given is kept, and a shorter refresh leaves the default summary interval alone
    assertEquals(86_400_000L, SettingsFile.apply(Map.of("backtest.refresh.every.ms", "43200000",
        "backtest.summary.every.ms", "86400000"), BacktestSettings.defaults()).summaryEveryMillis());
    assertEquals(BacktestSettings.defaults().summaryEveryMillis(), SettingsFile.apply(
        Map.of("backtest.refresh.every.ms", "60000"), BacktestSettings.defaults()).summaryEveryMillis());
    // given both, a summary shorter than the refresh is still an error
    assertThrows(IllegalArgumentException.class, () -> SettingsFile.apply(Map.of("backtest.refresh.every.ms",
        "43200000", "backtest.summary.every.ms", "3600000"), BacktestSettings.defaults()));
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
  /** A settings file written before the keys were respelled reads as the same settings, with one note per key. */
  @Test
  void theEarlierSpellingsStillReadWithADeprecationNoteEach(@TempDir Path directory) throws IOException {
    Path earlier = directory.resolve("earlier.properties");
    Files.writeString(earlier, String.join("\n", "engine.trackedPairCapacity=512", "engine.pairRanking=count",
        "horizon.recent.halfLifeMillis=7200000", "drift.minDwellMillis=0", "serve.cohortFloor=20",
        "backtest.refreshEveryMillis=600000", "evaluation.minConfidence=0.1", "run.sketchHealthIntervalMillis=1000", ""));
    Path now = directory.resolve("now.properties");
    Files.writeString(now, String.join("\n", "engine.tracked.pair.capacity=512", "engine.pair.ranking=count",
        "horizon.recent.half.life.ms=7200000", "drift.min.dwell.ms=0", "serve.cohort.floor=20",
        "backtest.refresh.every.ms=600000", "evaluation.min.confidence=0.1", ""));
    List<String> notes = new ArrayList<>();
    BacktestSettings fromEarlier = SettingsFile.read(earlier, BacktestSettings.defaults(), notes::add);
    BacktestSettings fromNow = SettingsFile.read(now, BacktestSettings.defaults());
    assertEquals(fromNow, fromEarlier);
    assertEquals(512, fromEarlier.engine().trackedPairCapacity());
    assertEquals(0.1, fromEarlier.evaluation().minConfidence());
    assertEquals(600_000, fromEarlier.refreshEveryMillis());
    assertEquals(9, notes.size(), String.join("\n", notes));
    assertTrue(notes.contains("key 'backtest.refreshEveryMillis' is deprecated: use 'backtest.refresh.every.ms'"),
        notes.toString());
    assertTrue(notes.contains("ignoring 'run.sketch.health.interval.ms': only 'pairpulse run' uses it"), notes.toString());
  }

  /** The backtest checks a value as 'pairpulse run' does: the same definition, the same range. */
  @Test
  void valuesAreCheckedByTheSameDefinitionsAsTheRunConfiguration() {
    for (Map.Entry<String, String> bad : Map.of("engine.tracked.pair.capacity", "1", "engine.pair.epsilon", "1.5",
        "horizon.day.panes", "0", "evaluation.k", "0", "drift.exit.ratio", "0.5", "engine.size.classes", "2,3+",
        "backtest.summary.top", "-1").entrySet()) {
      IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
          () -> SettingsFile.apply(Map.of(bad.getKey(), bad.getValue()), BacktestSettings.defaults()), bad.toString());
      assertTrue(e.getMessage().startsWith(bad.getKey() + "=" + bad.getValue() + ": "), e.getMessage());
      RunConfigException run = assertThrows(RunConfigException.class, () -> RunConfig.of(Map.of("bootstrap.servers",
          "k:9092", "topics", "t", bad.getKey(), bad.getValue()), "run"), bad.toString());
      if (!bad.getKey().startsWith("backtest.")) {
        assertEquals(e.getMessage(), run.problems().get(0), "the same check, the same words");
      }
    }
  }
  /** README-ops-analysis's table is the backtest's and evaluation's definitions; every key it names is defined. */
  @Test
  void theReadmeTablesAreTheDefinitions() throws IOException {
    Path readme = Path.of("README-ops-analysis.md");
    String text = Files.readString(readme);
    String begin = "<!-- backtest-keys-table:begin -->\n";
    String end = "<!-- backtest-keys-table:end -->";
    List<ConfigDef.ConfigKey> keys = new ArrayList<>(BacktestKeys.DEFINITION.configKeys().values());
    keys.addAll(EvaluationKeys.OFFLINE.configKeys().values());
    String table = ConfigParts.markdownTable(keys);
    if (Boolean.getBoolean("pairpulse.writeDocs")) {
      text = text.substring(0, text.indexOf(begin) + begin.length()) + table + text.substring(text.indexOf(end));
      Files.writeString(readme, text);
    }
    assertEquals(table, text.substring(text.indexOf(begin) + begin.length(), text.indexOf(end)),
        "README-ops-analysis.md's key table is stale; regenerate it with -Dpairpulse.writeDocs=true");
    String families = text.substring(text.indexOf("**Settings file**"), text.indexOf(begin));
    java.util.regex.Matcher key = java.util.regex.Pattern.compile("`([a-z0-9]+(?:\\.[a-z0-9]+)+)`").matcher(families);
    int named = 0;
    while (key.find()) {
      if (!key.group(1).endsWith(".md") && !key.group(1).contains("example")) {
        assertTrue(SettingsFile.PARTS.key(key.group(1)) != null, "README-ops-analysis names an undefined key: " + key.group(1));
        named++;
      }
    }
    assertTrue(named >= 12, "keys named: " + named);
  }
  /** What backtest, report and the replay benchmarks print for a file with an earlier spelling: one line a key. */
  @Test
  void theCommandsPrintEachDeprecationOnceWithTheirName(@TempDir Path directory) throws IOException {
    Path file = directory.resolve("earlier.properties");
    Files.writeString(file, "serve.cohortFloor=20\nengine.pairRanking=count\n");
    java.io.StringWriter err = new java.io.StringWriter();
    BacktestSettings settings = SettingsFile.readOption(file, BacktestSettings.defaults(), new java.io.PrintWriter(err),
        "report");
    assertEquals(20.0, settings.cohortFloor());
    assertEquals(List.of("report: " + file + ": key 'engine.pairRanking' is deprecated: use 'engine.pair.ranking'",
        "report: " + file + ": key 'serve.cohortFloor' is deprecated: use 'serve.cohort.floor'"),
        err.toString().lines().toList());
    assertEquals(BacktestSettings.defaults(), SettingsFile.readOption(null, BacktestSettings.defaults(),
        new java.io.PrintWriter(err), "report"), "no file: the base");
  }
}
