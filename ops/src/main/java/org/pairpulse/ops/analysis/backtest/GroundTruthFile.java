package org.pairpulse.ops.analysis.backtest;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioGroundTruth;

/** Reads the ground truth a scenario wrote ({@link ScenarioGroundTruth#toJson()}, file {@code ground-truth.json}). */
public final class GroundTruthFile {
  private GroundTruthFile() {}

  /** The ground truth in {@code file}; an {@link IOException} names what is missing or wrong. */
  public static ScenarioGroundTruth read(Path file) throws IOException {
    JsonNode root;
    try {
      root = new ObjectMapper().readTree(Files.readAllBytes(file));
    } catch (IOException e) {
      throw new IOException(file + ": not a ground-truth JSON file: " + e.getMessage(), e);
    }
    try {
      ScenarioConfig config = new ScenarioConfig(required(root, "seed").asLong(),
          Instant.ofEpochMilli(required(root, "startMillis").asLong()), required(root, "durationDays").asInt(),
          required(root, "basketsPerMinute").asDouble(), root.path("outOfOrderMillis").asLong(0));
      List<PlantedPair> planted = new ArrayList<>();
      for (JsonNode entry : required(root, "planted")) {
        List<String> items = new ArrayList<>();
        for (JsonNode item : required(entry, "items")) {
          items.add(item.asText());
        }
        JsonNode outside = entry.path("expectedLiftOutside");
        planted.add(new PlantedPair(PlantedKind.valueOf(required(entry, "kind").asText()), items,
            required(entry, "startMillis").asLong(), required(entry, "endMillis").asLong(),
            required(entry, "expectedLift").asDouble(), outside.isNumber() ? outside.asDouble() : Double.NaN,
            entry.path("description").asText("")));
      }
      return new ScenarioGroundTruth(config, planted);
    } catch (IllegalArgumentException e) {
      throw new IOException(file + ": invalid ground truth: " + e.getMessage(), e);
    }
  }

  private static JsonNode required(JsonNode node, String field) {
    JsonNode value = node.get(field);
    if (value == null || value.isNull()) {
      throw new IllegalArgumentException("missing '" + field + "'");
    }
    return value;
  }
}
