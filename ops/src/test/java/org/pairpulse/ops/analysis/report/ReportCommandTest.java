package org.pairpulse.ops.analysis.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeAll;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.MainTestAccess;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.ReplaySource;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;

/** {@code pairpulse report} from a replayed file with segments, and from a snapshot of the same state. */
class ReportCommandTest {
  @TempDir
  static Path directory;
  /**
   * A wide confidence band: two days at 3 baskets a minute leave few pairs whose size-adjusted association passes the
   * offer screen, and fewer still inside the default band.
   */
  static final String[] BAND = {"0.05", "0.95"};

  @BeforeAll
  static void writeScenario() throws IOException {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(2).withBasketsPerMinute(3)),
        directory);
    Files.writeString(directory.resolve("small.properties"),
        "engine.tracked.pair.capacity=1024\nengine.tracked.item.capacity=1024\n");
  }

  static String[] run(String... args) {
    MainTestAccess.Run run = MainTestAccess.run(args);
    return new String[] {Integer.toString(run.exitCode()), run.out(), run.err()};
  }

  /** {@code report --input} of the scenario file with segments by channel, floor 20, into {@code out}; exit 0. */
  private String[] reportByChannel(String out) {
    String[] result = run("report", "--input", directory.resolve(ScenarioFiles.JSON_LINES_FILE).toString(),
        "--segment-attribute", "channel", "--min-confidence", BAND[0], "--max-confidence", BAND[1], "--config", directory.resolve("small.properties").toString(), "--floor", "20",
        "--quiet", "--out", directory.resolve(out).toString());
    assertEquals("0", result[0], result[2]);
    return result;
  }

  @Test
  void writesTheListsPerSegmentAndTheSameListFromASnapshot() throws IOException {
    Path input = directory.resolve(ScenarioFiles.JSON_LINES_FILE);
    String[] byInput = reportByChannel("by-input");
    assertTrue(byInput[1].contains("4 segment(s)"), byInput[1]);
    List<String> rows = Files.readAllLines(directory.resolve("by-input").resolve(ShortlistCsv.FILE));
    assertEquals(String.join(",", ShortlistCsv.COLUMNS), rows.get(0));
    assertTrue(rows.stream().anyMatch(r -> r.startsWith("all,suggestion,1,")), rows.toString());
    assertTrue(rows.stream().anyMatch(r -> r.startsWith("channel=app,")), rows.toString());
    List<String> suppressed = Files.readAllLines(directory.resolve("by-input").resolve(ShortlistCsv.SUPPRESSED_FILE));
    assertEquals(List.of("all", "channel=app", "channel=store", "channel=web"),
        suppressed.subList(1, suppressed.size()).stream().map(l -> l.split(",")[0]).toList());
    assertTrue(Files.readString(directory.resolve("by-input").resolve(ShortlistHtml.FILE)).contains("Segment channel=web"));

    // the same state saved as a snapshot gives the same rows for "all"
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(1024).trackedItemCapacity(1024).build();
    PairEngine engine = new PairEngine(config);
    BacktestSettings settings = BacktestSettings.defaults();
    new ReplaySource(settings.limits(), settings.front()).read(input, null,
        basket -> engine.addBasket(basket.eventMillis(), basket.items()));
    Path snapshot = directory.resolve("state.snapshot");
    Files.write(snapshot, Snapshots.write(engine));
    String[] bySnapshot = run("report", "--snapshot", snapshot.toString(), "--floor", "20", "--min-confidence", BAND[0],
        "--max-confidence", BAND[1], "--out",
        directory.resolve("by-snapshot").toString());
    assertEquals("0", bySnapshot[0], bySnapshot[2]);
    List<String> snapshotRows = Files.readAllLines(directory.resolve("by-snapshot").resolve(ShortlistCsv.FILE));
    assertEquals(rows.stream().filter(r -> r.startsWith("all,")).toList(), snapshotRows.subList(1, snapshotRows.size()));
  }

  /**
   * Ingest's checkpoints carry the segments: a directory of partition checkpoints gives, per segment, the same rows
   * as replaying the file with the same segment settings (one partition, so the state is the same one).
   */
  @Test
  void aCheckpointDirectoryGivesTheSameListsPerSegmentAsTheReplay() throws IOException {
    Path input = directory.resolve(ScenarioFiles.JSON_LINES_FILE);
    reportByChannel("segments-by-input");
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(1024).trackedItemCapacity(1024).build();
    SegmentSettings segments = new SegmentSettings(List.of("channel"), SegmentSettings.DEFAULT_MAX_VALUES,
        SegmentSettings.DEFAULT_TRACKED_FRACTION);
    SegmentEngines engines = new SegmentEngines(config, segments, null);
    BacktestSettings settings = BacktestSettings.defaults();
    new ReplaySource(settings.limits(), settings.front()).read(input, null,
        basket -> engines.addBasket(basket.eventMillis(), basket.items().toArray(new String[0]), basket.attributes()));
    assertEquals(List.of("channel=app", "channel=store", "channel=web"), List.copyOf(engines.segments().keySet()));
    TreeMap<String, byte[]> segmentStates = new TreeMap<>();
    engines.segments().forEach((name, engine) -> segmentStates.put(name, Snapshots.write(engine)));
    Path checkpoints = directory.resolve("checkpoints");
    new LocalDirectoryStore(checkpoints).save(new PartitionCheckpoint("shop.baskets", 0, 1, 1, 0,
        new PartitionFront(settings.front()).encode(), Snapshots.write(engines.all()), segmentStates));

    String[] bySnapshot = run("report", "--snapshot", checkpoints.toString(), "--floor", "20", "--min-confidence", BAND[0],
        "--max-confidence", BAND[1], "--out",
        directory.resolve("segments-by-snapshot").toString());
    assertEquals("0", bySnapshot[0], bySnapshot[2]);
    assertTrue(bySnapshot[1].contains("4 segment(s)"), bySnapshot[1]);
    List<String> expected = Files.readAllLines(directory.resolve("segments-by-input").resolve(ShortlistCsv.FILE));
    assertTrue(expected.stream().anyMatch(r -> r.startsWith("channel=app,")), expected.toString());
    assertEquals(expected, Files.readAllLines(directory.resolve("segments-by-snapshot").resolve(ShortlistCsv.FILE)));
    assertEquals(Files.readAllLines(directory.resolve("segments-by-input").resolve(ShortlistCsv.SUPPRESSED_FILE)),
        Files.readAllLines(directory.resolve("segments-by-snapshot").resolve(ShortlistCsv.SUPPRESSED_FILE)));

    String[] region = run("report", "--snapshot", checkpoints.toString(), "--segment-attribute", "region", "--out",
        directory.resolve("never").toString());
    assertEquals("2", region[0], region[2]);
    assertTrue(region[2].contains("holds no segment of attribute 'region'"), region[2]);
  }

  @Test
  void refusesTwoSourcesAndBadSegmentSettings() {
    String[] both = run("report", "--input", "a.jsonl", "--snapshot", "b", "--out", "x");
    assertEquals("2", both[0]);
    assertTrue(both[2].contains("mutually exclusive"), both[2]);
    String[] badName = run("report", "--input", directory.resolve(ScenarioFiles.JSON_LINES_FILE).toString(),
        "--segment-attribute", "sales channel", "--out", directory.resolve("never").toString());
    assertEquals("2", badName[0], badName[1] + "/" + badName[2]);
    assertTrue(badName[2].contains("'sales channel' is not an attribute name"), badName[2]);
  }

  @Test
  void theSettingsFileNamesTheSegmentsAndItsBoundIsChecked() throws IOException {
    Path settings = directory.resolve("segments.properties");
    Files.writeString(settings, "segments.attributes=channel\nsegments.max.values=0\n");
    String[] bad = run("report", "--input", directory.resolve(ScenarioFiles.JSON_LINES_FILE).toString(), "--config",
        settings.toString(), "--out", directory.resolve("never").toString());
    assertEquals("2", bad[0], bad[2]);
    assertTrue(bad[2].contains("segments.max.values"), bad[2]);
    Files.writeString(settings, "segments.attributes=channel\nsegments.max.values=2\n"
        + "engine.tracked.pair.capacity=1024\nengine.tracked.item.capacity=1024\n");
    String[] bounded = run("report", "--input", directory.resolve(ScenarioFiles.JSON_LINES_FILE).toString(), "--config",
        settings.toString(), "--floor", "20", "--quiet", "--out", directory.resolve("bounded").toString());
    assertEquals("0", bounded[0], bounded[2]);
    assertTrue(bounded[1].contains("3 segment(s)"), "all and the first two channels: " + bounded[1]);
    assertTrue(bounded[2].contains("value of channel (over_bound) made no segment"), bounded[2]);
  }
}
