package org.pairpulse.ingest.kafka;

import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.LocalDirectoryStore;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * {@code checkpoint.store=local}: one file per partition ({@link LocalDirectoryStore}, atomic rename). The files
 * are the truth; the offsets are committed after them only so that lag tools see progress, and a failed offset
 * commit is logged, not retried.
 */
final class LocalCheckpoints implements CheckpointStore {
  private static final Logger LOG = LoggerFactory.getLogger(LocalCheckpoints.class);

  private final LocalDirectoryStore files;

  LocalCheckpoints(LocalDirectoryStore files) {
    this.files = files;
  }

  @Override
  public boolean checkpointsWholeAssignment() {
    return false;
  }

  @Override
  public Lookup lookup(TopicPartition tp, OffsetAndMetadata committed) {
    return Lookup.of(files.load(tp.topic(), tp.partition()));
  }

  @Override
  public long commit(List<PartitionCheckpoint> checkpoints, Consumer<byte[], byte[]> consumer) {
    long bytes = 0;
    Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
    for (PartitionCheckpoint cp : checkpoints) {
      bytes += files.save(cp);
      offsets.put(new TopicPartition(cp.topic(), cp.partition()), new OffsetAndMetadata(cp.nextOffset()));
    }
    try {
      consumer.commitSync(offsets); // for lag tools only: the files are the truth
    } catch (KafkaException e) {
      LOG.warn("offset commit after a local checkpoint failed ({}); the checkpoint files stand", e.toString());
    }
    return bytes;
  }

  @Override
  public boolean discardUncommitted() {
    return false; // each partition's file is its own: the lost ones are simply forgotten
  }

  @Override
  public void abandonOpen() {
    // nothing is open between two checkpoints
  }

  @Override
  public void close() {
    // no clients of its own
  }
}
