package org.pairpulse.ops.product.run;

import java.util.Map;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.Importance;
import org.apache.kafka.common.config.ConfigDef.Range;
import org.apache.kafka.common.config.ConfigDef.Type;

/** The keys of {@code pairpulse run} itself (beside the parts' keys it composes), defined with Kafka's {@link ConfigDef}. */
public final class RunKeys {
  public static final String ALERTS_KAFKA_ENABLED = "alerts.kafka.enabled";
  public static final String SKETCH_HEALTH_INTERVAL_MS = "run.sketch.health.interval.ms";

  /** Earlier spellings, each to its key. */
  public static final Map<String, String> RENAMED = Map.of("run.sketchHealthIntervalMillis", SKETCH_HEALTH_INTERVAL_MS);

  public static final ConfigDef DEFINITION = new ConfigDef()
      .define(ALERTS_KAFKA_ENABLED, Type.BOOLEAN, true, Importance.MEDIUM,
          "send alert events to alerts.kafka.topic on the input cluster (same kafka.* settings); false: no topic")
      .define(SKETCH_HEALTH_INTERVAL_MS, Type.LONG, 30_000L, Range.atLeast(1000), Importance.LOW,
          "how often the state's fill and error bounds are captured for the status page and /metrics (each time one"
              + " merged copy of the state is made)");

  private RunKeys() {}
}
