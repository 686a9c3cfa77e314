package org.pairpulse.ops.tools.scenario;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import java.util.Optional;

/**
 * What the scenario planted, for evaluation: every {@link PlantedPair} with its kind, items, interval and
 * expected lift. Pairs not listed have expected lift within [{@value #UNLISTED_LIFT_MIN},
 * {@value #UNLISTED_LIFT_MAX}] at all times (most exactly 1; background pairs within a few percent of 1).
 *
 * <h2>JSON form ({@link #toJson})</h2>
 * <pre>{@code
 * {
 *   "scenario": "kestrel-connect",
 *   "seed": 20260601,
 *   "start": "2026-06-01T00:00:00Z", "startMillis": 1780272000000, "endMillis": 1780963200000,
 *   "durationDays": 8, "basketsPerMinute": 20, "outOfOrderMillis": 0,
 *   "unlistedPairLift": {"min": 0.8, "max": 1.25},
 *   "planted": [
 *     {"kind": "EMERGING", "items": ["boost-lowlatency-5gb", "pack-esports"],
 *      "startMillis": …, "endMillis": …, "start": "2026-06-04T12:00:00Z", "end": "2026-06-06T12:00:00Z",
 *      "expectedLift": 6, "expectedLiftOutside": 1, "description": "…"},
 *     …
 *   ]
 * }
 * }</pre>
 * Times are epoch milliseconds, with ISO-8601 copies for people; lifts have 6 significant digits;
 * {@code expectedLiftOutside} is {@code null} for pairs planted over the whole run and for a pair from nothing
 * (one item never sold before its start).
 *
 * @param config the settings the scenario ran with
 * @param planted the planted pairs, in plan order (emerging, fading, bundles and affinities, repelling, noise)
 */
public record ScenarioGroundTruth(ScenarioConfig config, List<PlantedPair> planted) {
  public static final double UNLISTED_LIFT_MIN = 0.8;
  public static final double UNLISTED_LIFT_MAX = 1.25;

  public ScenarioGroundTruth {
    Objects.requireNonNull(config, "config");
    planted = List.copyOf(planted);
  }

  /** The planted pairs of one kind, in plan order. */
  public List<PlantedPair> ofKind(PlantedKind kind) {
    List<PlantedPair> pairs = new ArrayList<>();
    for (PlantedPair pair : planted) {
      if (pair.kind() == kind) {
        pairs.add(pair);
      }
    }
    return pairs;
  }

  /** The planted pair about {@code a} and {@code b} (either order), if any; each pair is listed at most once. */
  public Optional<PlantedPair> find(String a, String b) {
    for (PlantedPair pair : planted) {
      if (pair.isPair(a, b)) {
        return Optional.of(pair);
      }
    }
    return Optional.empty();
  }

  /** The JSON form described above, ending in a newline. */
  public String toJson() {
    StringBuilder out = new StringBuilder(8192);
    out.append("{\n  \"scenario\": \"kestrel-connect\",\n  \"seed\": ").append(config.seed());
    out.append(",\n  \"start\": ");
    JsonText.string(out, config.start().toString());
    out.append(",\n  \"startMillis\": ").append(config.startMillis());
    out.append(",\n  \"endMillis\": ").append(config.endMillis());
    out.append(",\n  \"durationDays\": ").append(config.durationDays());
    out.append(",\n  \"basketsPerMinute\": ");
    JsonText.number(out, config.basketsPerMinute());
    out.append(",\n  \"outOfOrderMillis\": ").append(config.outOfOrderMillis());
    out.append(",\n  \"unlistedPairLift\": {\"min\": ");
    JsonText.number(out, UNLISTED_LIFT_MIN).append(", \"max\": ");
    JsonText.number(out, UNLISTED_LIFT_MAX).append("},\n  \"planted\": [");
    for (int i = 0; i < planted.size(); i++) {
      PlantedPair pair = planted.get(i);
      out.append(i == 0 ? "\n" : ",\n").append("    {\"kind\": ");
      JsonText.string(out, pair.kind().name()).append(", \"items\": [");
      for (int j = 0; j < pair.items().size(); j++) {
        if (j > 0) {
          out.append(", ");
        }
        JsonText.string(out, pair.items().get(j));
      }
      out.append("], \"startMillis\": ").append(pair.startMillis());
      out.append(", \"endMillis\": ").append(pair.endMillis()).append(", \"start\": ");
      JsonText.string(out, Instant.ofEpochMilli(pair.startMillis()).toString()).append(", \"end\": ");
      JsonText.string(out, Instant.ofEpochMilli(pair.endMillis()).toString()).append(", \"expectedLift\": ");
      JsonText.number(out, pair.expectedLift()).append(", \"expectedLiftOutside\": ");
      JsonText.number(out, pair.expectedLiftOutside()).append(", \"description\": ");
      JsonText.string(out, pair.description()).append('}');
    }
    return out.append("\n  ]\n}\n").toString();
  }
}
