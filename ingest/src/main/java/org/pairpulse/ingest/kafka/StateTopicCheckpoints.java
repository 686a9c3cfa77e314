package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.CommitFailedException;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.AuthorizationException;
import org.apache.kafka.common.errors.FencedInstanceIdException;
import org.apache.kafka.common.errors.OutOfOrderSequenceException;
import org.apache.kafka.common.errors.ProducerFencedException;
import org.apache.kafka.common.errors.UnsupportedVersionException;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * {@code checkpoint.store=kafka} (group mode): checkpoints as chunks in the compacted state topic
 * ({@link StateTopicStore}), written in the producer's open transaction together with the consumer offsets they
 * cover and the dead letters of the interval. A commit ends that transaction and begins the next one; a commit
 * that fails (typically a rebalance made the group generation stale) aborts it, so nothing of the interval counts
 * and every partition is reread from its last checkpoint. After a crash the group resumes from the last committed
 * checkpoint and neither loses nor double-counts a basket.
 */
final class StateTopicCheckpoints implements CheckpointStore {
  private static final Logger LOG = LoggerFactory.getLogger(StateTopicCheckpoints.class);
  /** Shortest wait of a restore for a checkpoint hidden behind an open transaction, besides the shutdown timeout. */
  private static final long MIN_RESTORE_TIMEOUT_MS = 60_000;
  /** How long after a transaction's timeout its coordinator has surely aborted it. */
  private static final long TRANSACTION_ABORT_SLACK_MS = 30_000;

  private final Producer<byte[], byte[]> producer;
  private final StateTap tap;
  private final StateTopicStore chunks;
  private final KafkaClientProperties clients;
  /** Test hook: so many coming commits fail as if a rebalance had made the group generation stale. */
  private final AtomicInteger commitsToFail;
  /** Created when a restore first needs a state partition's log end (see {@link StateTopicStore}). */
  private Admin stateAdmin;

  StateTopicCheckpoints(IngestConfig config, TopicSetup.Layout layout, Producer<byte[], byte[]> producer,
      KafkaClientProperties clients, AtomicInteger commitsToFail) {
    this.producer = producer;
    this.clients = clients;
    this.commitsToFail = commitsToFail;
    producer.initTransactions();
    producer.beginTransaction();
    // a restore may wait for a dead instance's open transaction to be aborted (transaction.timeout.ms)
    Duration restoreTimeout = Duration.ofMillis(Math.max(Math.max(MIN_RESTORE_TIMEOUT_MS,
        config.getLong(IngestConfig.SHUTDOWN_TIMEOUT_MS)), config.transactionTimeoutMs() + TRANSACTION_ABORT_SLACK_MS));
    String stateTopic = config.getString(IngestConfig.STATE_TOPIC);
    this.chunks = new StateTopicStore(stateTopic, config.groupId(), layout.statePartitions(), layout.chunkBytes(), producer,
        restoreTimeout, this::stateLogEnd);
    this.tap = new StateTap(stateTopic, config.groupId(), layout.statePartitions(), config.topics(), restoreTimeout,
        this::stateLogEnd);
  }

  @Override
  public boolean checkpointsWholeAssignment() {
    return true;
  }

  @Override
  public Lookup lookup(TopicPartition tp, OffsetAndMetadata committed) {
    return tap.lookup(tp, committed, cp -> chunks.restored(tp, cp));
  }

  @Override
  public long commit(List<PartitionCheckpoint> checkpoints, Consumer<byte[], byte[]> consumer) {
    long bytes;
    try {
      StateTopicStore.Written written = chunks.write(checkpoints);
      producer.sendOffsetsToTransaction(written.offsets(), consumer.groupMetadata());
      if (commitsToFail.getAndUpdate(n -> Math.max(0, n - 1)) > 0) {
        throw new CommitFailedException("injected by a test: generation id is not valid");
      }
      producer.commitTransaction();
      bytes = written.bytes();
    } catch (ProducerFencedException | FencedInstanceIdException | OutOfOrderSequenceException
        | AuthorizationException | UnsupportedVersionException e) {
      throw e; // fatal: another instance took over this transactional id, or the cluster refuses us
    } catch (KafkaException e) {
      LOG.warn("checkpoint of {} failed ({}); aborting and rereading from the last checkpoint", partitionsOf(checkpoints),
          e.toString());
      producer.abortTransaction();
      producer.beginTransaction();
      return -1;
    }
    producer.beginTransaction();
    return bytes;
  }

  private static List<TopicPartition> partitionsOf(List<PartitionCheckpoint> checkpoints) {
    return checkpoints.stream().map(cp -> new TopicPartition(cp.topic(), cp.partition())).toList();
  }

  @Override
  public boolean discardUncommitted() {
    producer.abortTransaction();
    producer.beginTransaction();
    return true;
  }

  @Override
  public void abandonOpen() {
    // after a clean stop the open transaction is empty (the final checkpoint committed everything); after a
    // failure it holds uncommitted work. Either way abort it: a producer closed with an open transaction waits
    // out its close timeout.
    try {
      producer.abortTransaction();
    } catch (RuntimeException e) {
      LOG.debug("abort on close: {}", e.toString());
    }
  }

  /** The log end offset of a state partition, or −1 (poll thread). */
  private long stateLogEnd(TopicPartition statePartition) {
    if (stateAdmin == null) {
      stateAdmin = Admin.create(clients.admin("admin"));
    }
    return StateTopicReader.logEndOffset(stateAdmin, statePartition);
  }

  @Override
  public Optional<StateTap> stateTap() {
    return Optional.of(tap);
  }

  @Override
  public void close() {
    if (stateAdmin != null) {
      stateAdmin.close(Duration.ofSeconds(5));
    }
  }
}
