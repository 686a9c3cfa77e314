package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.TreeMap;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.ListOffsetsOptions;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.IsolationLevel;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;

/**
 * Reads a consumer group's latest committed checkpoints from the state topic: the whole group's state,
 * whichever instances wrote it. Merging the partitions' engines gives the global view (what one
 * uninterrupted run over all partitions would hold).
 */
public final class StateTopicReader {
  private StateTopicReader() {}

  /**
   * The newest committed checkpoint of every partition of {@code topics} for {@code group}.
   *
   * @param clientProps extra client properties (security settings and the like), may be empty
   */
  public static Map<TopicPartition, PartitionCheckpoint> read(String bootstrapServers, String stateTopic, String group,
      List<String> topics, Map<String, Object> clientProps) {
    Map<String, Object> adminProps = new HashMap<>(clientProps);
    adminProps.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers);
    Map<String, Object> readerProps = new HashMap<>(clientProps);
    readerProps.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers);
    readerProps.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    readerProps.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    readerProps.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    readerProps.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    Map<TopicPartition, PartitionCheckpoint> out = new TreeMap<>((a, b) -> a.topic().equals(b.topic())
        ? Integer.compare(a.partition(), b.partition()) : a.topic().compareTo(b.topic()));
    try (Admin admin = Admin.create(adminProps);
        KafkaConsumer<byte[], byte[]> reader = new KafkaConsumer<>(readerProps)) {
      Map<String, TopicDescription> described = admin.describeTopics(topics).allTopicNames().get(60, TimeUnit.SECONDS);
      List<TopicPartition> inputs = new java.util.ArrayList<>();
      described.values().forEach(topic -> topic.partitions().forEach(p -> inputs.add(new TopicPartition(topic.name(),
          p.partition()))));
      Map<TopicPartition, OffsetAndMetadata> committed = StableOffsets.committed(admin, group, inputs);
      int statePartitions = admin.describeTopics(List.of(stateTopic)).allTopicNames().get(60, TimeUnit.SECONDS)
          .get(stateTopic).partitions().size();
      StateTopicStore store = new StateTopicStore(stateTopic, group, statePartitions, 1 << 20, null,
          Duration.ofSeconds(90), source -> logEndOffset(admin, source));
      for (TopicDescription topic : described.values()) {
        topic.partitions().forEach(p -> {
          TopicPartition tp = new TopicPartition(topic.name(), p.partition());
          Optional<PartitionCheckpoint> cp = store.load(reader, tp, committed.get(tp));
          cp.ifPresent(c -> out.put(tp, c));
        });
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted reading the state topic", e);
    } catch (java.util.concurrent.ExecutionException | java.util.concurrent.TimeoutException e) {
      throw new IllegalStateException("cannot read the state of group " + group + ": " + e.getMessage(), e);
    }
    return out;
  }

  /** The log end offset (high watermark) of {@code tp}, or −1 when the broker does not tell it now. */
  static long logEndOffset(Admin admin, TopicPartition tp) {
    try {
      return admin.listOffsets(Map.of(tp, OffsetSpec.latest()), new ListOffsetsOptions(IsolationLevel.READ_UNCOMMITTED))
          .partitionResult(tp).get(10, TimeUnit.SECONDS).offset();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      return -1;
    } catch (java.util.concurrent.ExecutionException | java.util.concurrent.TimeoutException e) {
      return -1;
    }
  }

  /**
   * The merge of the checkpoints' segment engines per segment (segments other than {@code all}), in partition
   * order; a segment absent from a partition adds nothing.
   */
  public static java.util.SortedMap<String, PairEngine> mergeSegments(Map<TopicPartition, PartitionCheckpoint> checkpoints) {
    java.util.SortedMap<String, PairEngine> merged = new TreeMap<>();
    for (PartitionCheckpoint cp : checkpoints.values()) {
      cp.segments().forEach((name, bytes) -> {
        PairEngine engine = Snapshots.read(bytes);
        merged.computeIfAbsent(name, n -> new PairEngine(engine.config())).merge(engine);
      });
    }
    return merged;
  }

  /** The merge of the checkpoints' engines of segment {@code all}, in partition order. */
  public static PairEngine merge(EngineConfig config, Map<TopicPartition, PartitionCheckpoint> checkpoints) {
    PairEngine merged = new PairEngine(config);
    for (PartitionCheckpoint cp : checkpoints.values()) {
      merged.merge(Snapshots.read(cp.engine()));
    }
    return merged;
  }
}
