package org.pairpulse.ops.pipeline;

import java.util.HashMap;
import java.util.Map;
import org.apache.kafka.clients.CommonClientConfigs;

/**
 * Kafka client settings derived from ingest's properties, for the clients that ops opens itself (the
 * alerts producer, the admin that creates the alerts topic), with the same pass-through rule as ingest:
 * {@code kafka.X} to every client, {@code kafka.<kind>.X} to one kind (wins over {@code kafka.X}). So a
 * SASL/TLS setting given once reaches every client of the process.
 */
final class KafkaClientProperties {
  static final String PREFIX = "kafka.";

  private KafkaClientProperties() {}

  /**
   * @param ingestProperties ingest's settings ({@code bootstrap.servers}, {@code kafka.*}, ...)
   * @param kind {@code producer}, {@code consumer} or {@code admin}
   */
  static Map<String, Object> forClient(Map<String, ?> ingestProperties, String kind) {
    Map<String, Object> common = new HashMap<>();
    Map<String, Object> specific = new HashMap<>();
    for (Map.Entry<String, ?> e : ingestProperties.entrySet()) {
      String key = e.getKey();
      if (!key.startsWith(PREFIX)) {
        continue;
      }
      String name = key.substring(PREFIX.length());
      if (name.startsWith("consumer.") || name.startsWith("producer.") || name.startsWith("admin.")) {
        if (name.startsWith(kind + ".")) {
          specific.put(name.substring(kind.length() + 1), e.getValue());
        }
      } else {
        common.put(name, e.getValue());
      }
    }
    Map<String, Object> props = new HashMap<>(common);
    props.putAll(specific);
    Object bootstrap = ingestProperties.get(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG);
    if (bootstrap != null) {
      props.put(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
    }
    return props;
  }
}
