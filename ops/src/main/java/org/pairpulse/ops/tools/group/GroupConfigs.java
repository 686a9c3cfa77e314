package org.pairpulse.ops.tools.group;

/**
 * The {@code run --config} files of the group checks: one consumer group in group mode (state topic, group view,
 * alert leadership) with small capacities and short intervals, so that several instances fit one small machine.
 */
public final class GroupConfigs {
  private GroupConfigs() {}

  /**
   * @param group the consumer group; its topics are named after it ({@code <group>.state}, {@code <group>.alerts},
   *     {@code <group>.dead-letters})
   * @param instance the instance's stable id
   * @param publishMillis the checkpoint interval (the group view's publication interval)
   * @param refreshMillis the refresh interval
   */
  public static String properties(String bootstrapServers, String topic, String group, String instance,
      long publishMillis, long refreshMillis) {
    return String.join("\n",
        "bootstrap.servers=" + bootstrapServers,
        "topics=" + topic,
        "group.id=" + group,
        "instance.id=" + instance,
        "checkpoint.store=kafka",
        "state.topic=" + group + ".state",
        "dead.letter.topic=" + group + ".dead-letters",
        "alerts.kafka.topic=" + group + ".alerts",
        "checkpoint.interval.ms=" + publishMillis,
        "refresh.interval.ms=" + refreshMillis,
        "serve.port=0",
        "serve.cohort.floor=5",
        "serve.watch.ms=50",
        "drift.min.dwell.ms=0",
        "evaluation.share=0.2",
        "engine.pair.epsilon=0.01",
        "engine.item.epsilon=0.01",
        "engine.decay.pair.epsilon=0.002",
        "engine.tracked.pair.capacity=1024",
        "engine.tracked.item.capacity=256",
        "horizon.baseline.length.ms=604800000",
        "horizon.baseline.panes=7",
        "run.sketch.health.interval.ms=1000",
        // quick failure detection: a killed instance's partitions move within seconds
        "kafka.consumer.session.timeout.ms=4000",
        "kafka.consumer.heartbeat.interval.ms=500",
        "kafka.producer.transaction.timeout.ms=8000",
        "");
  }
}
