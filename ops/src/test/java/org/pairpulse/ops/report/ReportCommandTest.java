package org.pairpulse.ops.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.backtest.BacktestSettings;
import org.pairpulse.ops.backtest.ReplaySource;
import org.pairpulse.ops.scenario.ScenarioConfig;
import org.pairpulse.ops.scenario.ScenarioFiles;
import org.pairpulse.ops.scenario.ScenarioGenerator;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import picocli.CommandLine;

/** {@code pairpulse report} from a replayed file with segments, and from a snapshot of the same state. */
class ReportCommandTest {
  @TempDir
  static Path directory;

  @BeforeAll
  static void writeScenario() throws IOException {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(2).withBasketsPerMinute(3)),
        directory);
    Files.writeString(directory.resolve("small.properties"),
        "engine.trackedPairCapacity=1024\nengine.trackedItemCapacity=1024\n");
  }

  static String[] run(String... args) {
    StringWriter out = new StringWriter();
    StringWriter err = new StringWriter();
    CommandLine commandLine = Main.commandLine();
    commandLine.setOut(new PrintWriter(out, true));
    commandLine.setErr(new PrintWriter(err, true));
    int exitCode = commandLine.execute(args);
    return new String[] {Integer.toString(exitCode), out.toString(), err.toString()};
  }

  @Test
  void writesTheListsPerSegmentAndTheSameListFromASnapshot() throws IOException {
    Path input = directory.resolve(ScenarioFiles.JSON_LINES_FILE);
    String[] byInput = run("report", "--input", input.toString(), "--segment-attribute", "channel", "--config",
        directory.resolve("small.properties").toString(), "--floor", "20", "--quiet", "--out",
        directory.resolve("by-input").toString());
    assertEquals("0", byInput[0], byInput[2]);
    assertTrue(byInput[1].contains("4 segment(s)"), byInput[1]);
    List<String> rows = Files.readAllLines(directory.resolve("by-input").resolve(PromoCsv.FILE));
    assertEquals(String.join(",", PromoCsv.COLUMNS), rows.get(0));
    assertTrue(rows.stream().anyMatch(r -> r.startsWith("all,suggestion,1,")), rows.toString());
    assertTrue(rows.stream().anyMatch(r -> r.startsWith("channel=app,")), rows.toString());
    List<String> suppressed = Files.readAllLines(directory.resolve("by-input").resolve(PromoCsv.SUPPRESSED_FILE));
    assertEquals(List.of("all", "channel=app", "channel=store", "channel=web"),
        suppressed.subList(1, suppressed.size()).stream().map(l -> l.split(",")[0]).toList());
    assertTrue(Files.readString(directory.resolve("by-input").resolve(PromoHtml.FILE)).contains("Segment channel=web"));

    // the same state saved as a snapshot gives the same rows for "all"
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(1024).trackedItemCapacity(1024).build();
    PairEngine engine = new PairEngine(config);
    BacktestSettings settings = BacktestSettings.defaults();
    new ReplaySource(settings.limits(), settings.front()).read(input, null,
        basket -> engine.addBasket(basket.eventMillis(), basket.items()));
    Path snapshot = directory.resolve("state.snapshot");
    Files.write(snapshot, Snapshots.write(engine));
    String[] bySnapshot = run("report", "--snapshot", snapshot.toString(), "--floor", "20", "--out",
        directory.resolve("by-snapshot").toString());
    assertEquals("0", bySnapshot[0], bySnapshot[2]);
    List<String> snapshotRows = Files.readAllLines(directory.resolve("by-snapshot").resolve(PromoCsv.FILE));
    assertEquals(rows.stream().filter(r -> r.startsWith("all,")).toList(), snapshotRows.subList(1, snapshotRows.size()));
  }

  @Test
  void refusesSegmentsOfASnapshotAndTwoSources() {
    String[] both = run("report", "--input", "a.jsonl", "--snapshot", "b", "--out", "x");
    assertEquals("2", both[0]);
    assertTrue(both[2].contains("mutually exclusive"), both[2]);
    String[] segments = run("report", "--snapshot", directory.resolve(ScenarioFiles.GROUND_TRUTH_FILE).toString(),
        "--segment-attribute", "channel", "--out", directory.resolve("never").toString());
    assertEquals("2", segments[0]);
    assertTrue(segments[2].contains("--segment-attribute needs --input"), segments[2]);
  }
}
