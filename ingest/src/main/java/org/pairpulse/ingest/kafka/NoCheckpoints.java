package org.pairpulse.ingest.kafka;

import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;

/** {@code checkpoint.store=none}: no checkpoints, no offset commits (benchmarks, throw-away demos). */
final class NoCheckpoints implements CheckpointStore {
  @Override
  public boolean keepsCheckpoints() {
    return false;
  }

  @Override
  public boolean checkpointsWholeAssignment() {
    return false;
  }

  @Override
  public Map<TopicPartition, OffsetAndMetadata> committed(Consumer<byte[], byte[]> consumer, Set<TopicPartition> partitions) {
    return Map.of();
  }

  @Override
  public Lookup lookup(TopicPartition tp, OffsetAndMetadata committed) {
    return Lookup.of(Optional.empty());
  }

  @Override
  public long commit(List<PartitionCheckpoint> checkpoints, Consumer<byte[], byte[]> consumer) {
    return 0;
  }

  @Override
  public boolean discardUncommitted() {
    return false;
  }

  @Override
  public void abandonOpen() {
    // nothing is ever open
  }

  @Override
  public void close() {
    // no clients of its own
  }
}
