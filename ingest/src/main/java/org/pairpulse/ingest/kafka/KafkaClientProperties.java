package org.pairpulse.ingest.kafka;

import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import org.apache.kafka.clients.CommonClientConfigs;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;

/**
 * The one place that turns ingest's settings into Kafka client properties, for ingest's own clients and for
 * every other client of the process (ops' alerts producer, its admin).
 *
 * <p>The rule for all of them: {@code bootstrap.servers}, then the pass-through keys {@code kafka.X} (every
 * client), then {@code kafka.<kind>.X} (one kind; wins over {@code kafka.X}). So a SASL/TLS setting given once
 * reaches every client. Ingest's own clients add their defaults before the pass-through (so a user can
 * override them) and the settings they cannot work without after it (byte-array (de)serializers; in group mode
 * {@code read_committed} and the assignor that shares the state topic); see README-ingest.md, Consumption.
 */
public final class KafkaClientProperties {
  /** The kinds of Kafka client, each with its own pass-through prefix {@code kafka.<name>.}. */
  public enum Kind {
    CONSUMER("consumer"),
    PRODUCER("producer"),
    ADMIN("admin");

    private final String prefixName;

    Kind(String prefixName) {
      this.prefixName = prefixName;
    }
  }

  private final IngestConfig config;
  private final String instanceId;
  private final String clientIdPrefix;

  /**
   * @param instanceId names the clients: {@code pairpulse-<instanceId>[-<role>]}
   */
  public KafkaClientProperties(IngestConfig config, String instanceId) {
    this.config = Objects.requireNonNull(config, "config");
    this.instanceId = Objects.requireNonNull(instanceId, "instanceId");
    this.clientIdPrefix = "pairpulse-" + instanceId;
  }

  /**
   * {@code bootstrap.servers} and the pass-through settings of one client kind, nothing else: the start of
   * the properties of a client that is not ingest's own (it adds its client id, serializers, ...).
   */
  public static Map<String, Object> forClient(IngestConfig config, Kind kind) {
    Map<String, Object> props = new HashMap<>();
    props.put(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG, String.join(",", config.bootstrapServers()));
    props.putAll(config.clientOverrides(kind.prefixName));
    return props;
  }

  /** An admin client's: client id {@code pairpulse-<instance>-<role>}. */
  Map<String, Object> admin(String role) {
    Map<String, Object> props = bootstrap();
    props.put(AdminClientConfig.CLIENT_ID_CONFIG, clientIdPrefix + "-" + role);
    props.putAll(config.clientOverrides(Kind.ADMIN.prefixName));
    return props;
  }

  /**
   * The group consumer that reads the input topics: no auto commit (checkpoints commit), {@code read_committed},
   * cooperative rebalancing, 2,000 records a poll, 4 MiB a partition fetch. With {@code sharedTopics} (group mode: the
   * state topic and the followed compacted topics) it is the instance's one consumer of the group's state too: it
   * subscribes to them as well, and whatever is passed through, it reads {@code read_committed}, in the classic group
   * protocol, with {@link SharedTopicsAssignor} (every member gets every shared partition).
   */
  Map<String, Object> groupConsumer(List<String> sharedTopics) {
    Map<String, Object> props = bootstrap();
    props.put(ConsumerConfig.GROUP_ID_CONFIG, config.groupId());
    props.put(ConsumerConfig.CLIENT_ID_CONFIG, clientIdPrefix);
    props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    props.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
    props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    props.put(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG, CooperativeStickyAssignor.class.getName());
    props.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 2000);
    props.put(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, 4 << 20);
    props.putAll(config.clientOverrides(Kind.CONSUMER.prefixName));
    if (!sharedTopics.isEmpty()) {
      props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
      props.put(ConsumerConfig.GROUP_PROTOCOL_CONFIG, "classic");
      props.put(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG, SharedTopicsAssignor.class.getName());
      props.put(SharedTopicsAssignor.SHARED_TOPICS, String.join(",", sharedTopics));
    }
    byteArrayDeserializers(props);
    return props;
  }

  /**
   * The producer of dead letters and (group mode) checkpoints: idempotent, {@code acks=all}, lz4 batches of up to
   * 256 KiB after 5 ms; in group mode transactional, with id {@code pairpulse-<group>-<instance>} (a restarted
   * instance of the same name fences its predecessor).
   */
  Map<String, Object> producer() {
    Map<String, Object> props = bootstrap();
    props.put(ProducerConfig.CLIENT_ID_CONFIG, clientIdPrefix + "-producer");
    props.put(ProducerConfig.ACKS_CONFIG, "all");
    props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    props.put(ProducerConfig.LINGER_MS_CONFIG, 5);
    props.put(ProducerConfig.BATCH_SIZE_CONFIG, 256 * 1024);
    props.put(ProducerConfig.COMPRESSION_TYPE_CONFIG, "lz4");
    if (config.store() == IngestConfig.Store.KAFKA) {
      props.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, "pairpulse-" + config.groupId() + "-" + instanceId);
    }
    props.putAll(config.producerOverrides());
    props.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    props.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    return props;
  }

  private Map<String, Object> bootstrap() {
    Map<String, Object> props = new HashMap<>();
    props.put(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG, String.join(",", config.bootstrapServers()));
    return props;
  }

  private static void byteArrayDeserializers(Map<String, Object> props) {
    props.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    props.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
  }
}
