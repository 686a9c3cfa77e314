package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ops.Main;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;
import picocli.CommandLine;

/**
 * End to end: a 5-day Kestrel Connect scenario at a low basket rate, replayed by {@code pairpulse backtest} with its
 * ground truth; both planted emerging pairs are scored, and the e-sports pair (e-sports pack and low-latency boost,
 * from day 3 12:00) is alerted. Whether the pair from nothing (the new handset's launch case, from day 3 15:00) is
 * alerted is the drift detector's matter, not asserted here.
 */
class PlantedEmergingTest {
  @TempDir
  Path directory;

  @Test
  void thePlantedEmergingPairIsAlerted() throws Exception {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(5).withBasketsPerMinute(6)),
        directory);
    // a small tracked table and a coarse refresh keep the test fast; the floor is lowered for the low rate
    Files.writeString(directory.resolve("test.properties"),
        "engine.tracked.pair.capacity=1024\nengine.tracked.item.capacity=1024\n");
    StringWriter out = new StringWriter();
    StringWriter err = new StringWriter();
    CommandLine cli = Main.commandLine();
    cli.setOut(new PrintWriter(out, true));
    cli.setErr(new PrintWriter(err, true));
    int exit = cli.execute("backtest", "--input", directory.resolve(ScenarioFiles.JSON_LINES_FILE).toString(),
        "--ground-truth", directory.resolve(ScenarioFiles.GROUND_TRUTH_FILE).toString(), "--config",
        directory.resolve("test.properties").toString(), "--refresh-every", "1h", "--summary-every", "1d",
        "--eval-share", "0", "--floor", "20", "--quiet", "--out", directory.resolve("out").toString());
    assertEquals(Main.EXIT_OK, exit, err.toString());
    JsonNode detection = new ObjectMapper().readTree(directory.resolve("out").resolve(BacktestRun.JSON_FILE).toFile())
        .get("detection");
    assertEquals(2, detection.get("planted").asInt(), detection.toString());
    JsonNode event = detection.at("/events/0");
    assertEquals("EMERGING", event.get("kind").asText());
    assertEquals("boost-lowlatency-5gb", event.at("/pair/0").asText());
    assertEquals("pack-esports", event.at("/pair/1").asText());
    assertTrue(event.get("detected").asBoolean(), detection.toString());
    assertTrue(event.get("delayMinutes").asDouble() >= 0, event.toString());
    JsonNode launch = detection.at("/events/1");
    assertEquals("EMERGING", launch.get("kind").asText());
    assertEquals("case-kestrel-two-launch", launch.at("/pair/0").asText());
    assertEquals("handset-kestrel-two", launch.at("/pair/1").asText());
    assertTrue(out.toString().matches("(?s).*detection: [12]/2 planted changes.*"), out.toString());
  }
}
