package org.pairpulse.ingest.kafka;

import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;

/**
 * Where an ingestor's checkpoints go ({@code checkpoint.store}): one implementation per store, so the poll loop
 * never asks which one it has. A store saves checkpoints and commits the offsets they cover, loads a partition's
 * newest checkpoint, and owns whatever must stay open between two checkpoints (group mode: the producer's
 * transaction, which the dead letters of the interval join).
 *
 * <ul>
 *   <li>{@code kafka}: {@link StateTopicCheckpoints}, chunks in a compacted state topic written in one transaction
 *       with the consumer offsets (exactly once across crashes and rebalances);</li>
 *   <li>{@code local}: {@link LocalCheckpoints}, one file per partition ({@link LocalDirectoryStore}), the offsets
 *       committed after them for lag tools only;</li>
 *   <li>{@code none}: {@link NoCheckpoints}, nothing kept and nothing committed.</li>
 * </ul>
 *
 * <p>Threading: the poll thread only.
 */
interface CheckpointStore extends AutoCloseable {

  /** The store of {@code config}; opens what it needs on {@code producer} (group mode: begins its transaction). */
  static CheckpointStore open(IngestConfig config, TopicSetup.Layout layout, Producer<byte[], byte[]> producer,
      KafkaClientProperties clients, AtomicInteger commitsToFail) {
    return switch (config.store()) {
      case KAFKA -> new StateTopicCheckpoints(config, layout, producer, clients, commitsToFail);
      case LOCAL -> new LocalCheckpoints(new LocalDirectoryStore(Path.of(config.getString(IngestConfig.CHECKPOINT_DIR))));
      case NONE -> new NoCheckpoints();
    };
  }

  /** False when checkpoints are not kept at all: a checkpoint then only marks the partitions clean. */
  default boolean keepsCheckpoints() {
    return true;
  }

  /**
   * True when a checkpoint must take every dirty partition of the instance, not just those asked for (one
   * transaction holds the whole interval's work, dead letters included).
   */
  boolean checkpointsWholeAssignment();

  /** The group's committed offsets of {@code partitions} (none for a store that commits nothing). */
  default Map<TopicPartition, OffsetAndMetadata> committed(Consumer<byte[], byte[]> consumer,
      Set<TopicPartition> partitions) {
    return consumer.committed(partitions);
  }

  /**
   * The tap through which the instance's one consumer reads the group's compacted state, beside the basket topics
   * (state-topic store only).
   */
  default Optional<StateTap> stateTap() {
    return Optional.empty();
  }

  /**
   * The newest checkpoint of {@code tp}, at once (files, none) or once the poll loop has read far enough (the state
   * topic: see {@link StateTap}); {@code committed} is its committed offset, or null.
   */
  Lookup lookup(TopicPartition tp, OffsetAndMetadata committed);

  /** A partition's newest checkpoint, as soon as it can be told (poll thread). */
  interface Lookup {
    /** True once {@link #found()} can be told; asked again after every poll until then. */
    boolean ready();

    /** The checkpoint, or empty when there is none (after {@link #ready()}). */
    Optional<PartitionCheckpoint> found();

    /** A lookup answered at once. */
    static Lookup of(Optional<PartitionCheckpoint> found) {
      return new Lookup() {
        @Override
        public boolean ready() {
          return true;
        }

        @Override
        public Optional<PartitionCheckpoint> found() {
          return found;
        }
      };
    }
  }

  /**
   * Saves {@code checkpoints} and commits the offsets they cover. Returns the bytes written, or −1 when the commit
   * failed and was rolled back (nothing of the interval is committed: the caller rereads every partition from its
   * last checkpoint). Throws when the instance cannot go on (fenced, not authorized).
   */
  long commit(List<PartitionCheckpoint> checkpoints, Consumer<byte[], byte[]> consumer);

  /**
   * Partitions were lost without a clean hand-over: drops the work not yet committed. Returns true when that work
   * held other partitions' too (they must be rewound to their last checkpoints).
   */
  boolean discardUncommitted();

  /** Before the producer closes (after a clean stop or a failure): ends what is still open. */
  void abandonOpen();

  /** Closes the store's own clients. */
  @Override
  void close();
}
