package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.Config;
import org.apache.kafka.clients.admin.ConfigEntry;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.config.ConfigResource;
import org.apache.kafka.common.config.TopicConfig;
import org.apache.kafka.common.errors.TopicExistsException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The topics an ingestor needs before it reads, set up once at start: the input topics are described (their
 * largest partition count sizes the others), the dead-letter topic and, in group mode, the compacted state
 * topic are created when missing ({@code topics.create}) and waited for until they accept writes; the state
 * topic's partition count and message limit give the {@link Layout} the state-topic store writes with.
 */
final class TopicSetup {
  private static final Logger LOG = LoggerFactory.getLogger(TopicSetup.class);
  /** Kafka's defaults of {@code max.message.bytes} (topic) and {@code max.request.size} (producer). */
  private static final int DEFAULT_TOPIC_MESSAGE_BYTES = 1_048_588;
  private static final int DEFAULT_PRODUCER_REQUEST_BYTES = 1_048_576;
  /** Room a state chunk leaves for the record's key, headers and batch framing. */
  private static final int CHUNK_HEADROOM_BYTES = 4096;

  /**
   * What the state-topic store writes with.
   *
   * @param statePartitions partitions of the state topic (the input's largest count without a state topic)
   * @param chunkBytes largest checkpoint chunk; 0 without a state topic
   */
  record Layout(int statePartitions, int chunkBytes) {}

  private TopicSetup() {}

  /** Describes the inputs, creates what is missing, and measures the state topic (group mode). */
  static Layout prepare(IngestConfig config, Map<String, Object> adminProps)
      throws ExecutionException, InterruptedException, TimeoutException {
    try (Admin admin = Admin.create(adminProps)) {
      int inputPartitions = 1;
      Map<String, TopicDescription> inputs = admin.describeTopics(config.topics()).allTopicNames().get(60, TimeUnit.SECONDS);
      for (TopicDescription d : inputs.values()) {
        inputPartitions = Math.max(inputPartitions, d.partitions().size());
      }
      boolean create = config.getBoolean(IngestConfig.TOPICS_CREATE);
      if (create) {
        ensureTopic(admin, config.getString(IngestConfig.DEAD_LETTER_TOPIC), inputPartitions, Map.of());
      }
      if (config.store() != IngestConfig.Store.KAFKA) {
        return new Layout(inputPartitions, 0);
      }
      String stateTopic = config.getString(IngestConfig.STATE_TOPIC);
      if (create) {
        ensureTopic(admin, stateTopic, inputPartitions,
            Map.of(TopicConfig.CLEANUP_POLICY_CONFIG, TopicConfig.CLEANUP_POLICY_COMPACT));
      }
      return measureStateTopic(admin, config, stateTopic);
    }
  }

  /** The state topic's partitions and the chunk size its message limit (and the producer's request limit) allows. */
  private static Layout measureStateTopic(Admin admin, IngestConfig config, String stateTopic)
      throws ExecutionException, InterruptedException, TimeoutException {
    TopicDescription state = retrying("describe " + stateTopic,
        () -> admin.describeTopics(List.of(stateTopic)).allTopicNames().get(10, TimeUnit.SECONDS).get(stateTopic));
    ConfigResource resource = new ConfigResource(ConfigResource.Type.TOPIC, stateTopic);
    Config topicConfig = retrying("describe the configs of " + stateTopic,
        () -> admin.describeConfigs(List.of(resource)).all().get(10, TimeUnit.SECONDS).get(resource));
    ConfigEntry cleanup = topicConfig.get(TopicConfig.CLEANUP_POLICY_CONFIG);
    if (cleanup != null && !cleanup.value().contains(TopicConfig.CLEANUP_POLICY_COMPACT)) {
      LOG.warn("state topic {} has cleanup.policy={}; use compact or old checkpoints are deleted only by retention",
          stateTopic, cleanup.value());
    }
    ConfigEntry maxMessage = topicConfig.get(TopicConfig.MAX_MESSAGE_BYTES_CONFIG);
    int topicLimit = maxMessage == null ? DEFAULT_TOPIC_MESSAGE_BYTES : Integer.parseInt(maxMessage.value());
    Object requestSize = config.producerOverrides().get(ProducerConfig.MAX_REQUEST_SIZE_CONFIG);
    int producerLimit = requestSize == null ? DEFAULT_PRODUCER_REQUEST_BYTES : Integer.parseInt(requestSize.toString());
    int chunkBytes = Math.min(topicLimit, producerLimit) - CHUNK_HEADROOM_BYTES;
    int configured = config.getInt(IngestConfig.STATE_CHUNK_BYTES);
    if (configured > 0) {
      chunkBytes = Math.min(chunkBytes, configured);
    }
    return new Layout(state.partitions().size(), chunkBytes);
  }

  private interface AdminCall<T> {
    T call() throws ExecutionException, InterruptedException, TimeoutException;
  }

  /** Retries an admin call for up to 30 s while a topic just created is not yet known everywhere. */
  private static <T> T retrying(String what, AdminCall<T> call) throws InterruptedException, ExecutionException, TimeoutException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
    while (true) {
      try {
        return call.call();
      } catch (ExecutionException e) {
        if (!(e.getCause() instanceof org.apache.kafka.common.errors.RetriableException) || System.nanoTime() > deadline) {
          throw new ExecutionException("cannot " + what + ": " + e.getCause(), e.getCause());
        }
        Thread.sleep(100); // back-off between retries of a retriable admin error
      }
    }
  }

  /**
   * Creates {@code topic} unless it exists, then waits until its partitions accept writes: the producer
   * writes dead letters and checkpoints to it at once, and a write racing the broker's leadership set-up
   * can fail for good (see {@link Topics}).
   */
  private static void ensureTopic(Admin admin, String topic, int partitions, Map<String, String> configs)
      throws InterruptedException, TimeoutException, ExecutionException {
    if (!admin.listTopics().names().get(60, TimeUnit.SECONDS).contains(topic)) {
      try {
        admin.createTopics(List.of(new NewTopic(topic, Optional.of(partitions), Optional.empty()).configs(configs)))
            .all().get(60, TimeUnit.SECONDS);
        LOG.info("created topic {} ({} partitions{})", topic, partitions, configs.isEmpty() ? "" : ", " + configs);
      } catch (ExecutionException e) {
        if (!(e.getCause() instanceof TopicExistsException)) {
          throw e;
        }
      }
    }
    Topics.awaitWritable(admin, List.of(topic), Duration.ofSeconds(60));
  }
}
