package org.pairpulse.ingest.kafka;

import java.util.Collection;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.worker.EngineLanes;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * When and how an ingestor's dirty partitions are checkpointed: every {@code checkpoint.interval.ms} or
 * {@code checkpoint.interval.baskets} ({@link #due}), when partitions are revoked ({@link #checkpoint}), and at
 * shutdown ({@link #finalCheckpoint}, which reads again and commits again when its commit fails). The snapshot comes
 * from the engine lanes, the front and offsets from the {@link PartitionSlots}, and the {@link CheckpointStore} saves
 * and commits it.
 *
 * <p>Threading: the poll thread only.
 */
final class Checkpointer {
  private static final Logger LOG = LoggerFactory.getLogger(Checkpointer.class);

  /** One round of the poll loop's reading (for the rereading of a failed final checkpoint). */
  @FunctionalInterface
  interface PollRound {
    void run() throws InterruptedException;
  }

  private final String instanceId;
  private final PartitionSlots slots;
  private final CheckpointStore store;
  private final EngineLanes lanes;
  private final Consumer<byte[], byte[]> consumer;
  private final IngestMetrics metrics;
  private final long intervalMs;
  private final long intervalBaskets;
  private long basketsSince;
  private long lastMillis;

  Checkpointer(String instanceId, PartitionSlots slots, CheckpointStore store, EngineLanes lanes,
      Consumer<byte[], byte[]> consumer, IngestMetrics metrics, long intervalMs, long intervalBaskets, long nowMillis) {
    this.instanceId = instanceId;
    this.slots = slots;
    this.store = store;
    this.lanes = lanes;
    this.consumer = consumer;
    this.metrics = metrics;
    this.intervalMs = intervalMs;
    this.intervalBaskets = intervalBaskets;
    this.lastMillis = nowMillis;
  }

  /** {@code baskets} more were counted since the last checkpoint. */
  void counted(long baskets) {
    basketsSince += baskets;
  }

  /** True when the interval (time or baskets) since the last checkpoint has passed. */
  boolean due(long nowMillis) {
    return basketsSince >= intervalBaskets || nowMillis - lastMillis >= intervalMs;
  }

  /**
   * Checkpoints the dirty partitions among {@code candidates} (group mode: all dirty ones, one transaction).
   * Returns false if the commit failed: then nothing of it counts, and the partitions were rewound to their
   * last checkpoints, to be read again.
   */
  boolean checkpoint(Collection<TopicPartition> candidates, long nowMillis) {
    List<TopicPartition> dirty = slots.dirty(store.checkpointsWholeAssignment() ? slots.owned() : candidates);
    if (dirty.isEmpty() || !store.keepsCheckpoints()) {
      slots.markClean(dirty);
      basketsSince = 0;
      lastMillis = nowMillis;
      return true;
    }
    long startNanos = System.nanoTime();
    List<PartitionCheckpoint> checkpoints = slots.checkpointsOf(dirty, lanes.snapshot(dirty).join(), nowMillis);
    long bytes = store.commit(checkpoints, consumer);
    if (bytes < 0) {
      metrics.checkpointFailed();
      slots.rewindAll();
      return false;
    }
    slots.checkpointed(checkpoints);
    basketsSince = 0;
    lastMillis = nowMillis;
    metrics.checkpointed(bytes, System.nanoTime() - startNanos);
    LOG.debug("checkpointed {} ({} bytes)", dirty, bytes);
    return true;
  }

  /**
   * The checkpoint at shutdown. It first reads the partitions again up to where this instance had read them, should a
   * failed commit have rewound them just before the stop; if its own transaction fails to commit (typically because a
   * rebalance, such as another instance leaving at the same moment, made the group generation stale), the partitions
   * were rewound to their last checkpoints: it reads them again ({@code pollRound}) and commits again, until
   * {@code budgetMs} is spent. Without this, a clean stop could leave the group's committed state behind what the
   * instance had read.
   */
  void finalCheckpoint(long budgetMs, java.util.function.LongSupplier clockMillis, PollRound pollRound)
      throws InterruptedException {
    long started = System.nanoTime();
    long deadline = started + TimeUnit.MILLISECONDS.toNanos(budgetMs);
    Map<TopicPartition, Long> target = slots.readOffsets();
    int attempts = 0;
    while (true) {
      attempts++;
      while (!slots.reached(target) && System.nanoTime() < deadline) {
        pollRound.run();
      }
      if (checkpoint(slots.owned(), clockMillis.getAsLong())) {
        break;
      }
      if (System.nanoTime() > deadline) {
        LOG.warn("final checkpoint of instance {} failed {} times; its partitions resume from their last committed checkpoints",
            instanceId, attempts);
        return;
      }
      LOG.info("final checkpoint of instance {} failed; reading its partitions again up to {} before committing again",
          instanceId, target);
    }
    if (attempts > 1) {
      LOG.info("final checkpoint of instance {} committed at attempt {}, {} ms after the stop", instanceId, attempts,
          TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - started));
    }
  }
}
