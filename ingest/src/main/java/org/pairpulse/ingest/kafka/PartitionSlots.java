package org.pairpulse.ingest.kafka;

import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.function.BooleanSupplier;
import java.util.function.Predicate;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ingest.worker.EngineLanes;
import org.pairpulse.ingest.worker.EngineWorker;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The partitions an ingestor owns, one {@link Slot} each (its front, how far it is read, whether it changed since
 * its last checkpoint), and the moves of ownership: restore from the newest checkpoint when a partition is
 * assigned, forget it when it is revoked or lost, rewind it to its last checkpoint when a commit failed. The
 * engines of the slots live on the engine lanes; a restore, drop or rewind waits until the lanes have done it.
 *
 * <p>Threading: the poll thread only, except {@link #assignment()} and {@link #positions()}, which any thread
 * may read.
 */
final class PartitionSlots {
  private static final Logger LOG = LoggerFactory.getLogger(PartitionSlots.class);

  /** Per-partition state on the poll thread. */
  static final class Slot {
    final PartitionFront front;
    long nextOffset = -1;
    /** Where this state began reading when no checkpoint existed (so a rewind can go back there); −1 otherwise. */
    long startOffset = -1;
    long checkpointId;
    boolean dirty;

    Slot(PartitionFront front) {
      this.front = front;
    }
  }

  private final Consumer<byte[], byte[]> consumer;
  private final CheckpointStore store;
  private final EngineLanes lanes;
  private final FrontSettings frontSettings;
  private final SegmentSettings segmentSettings;
  private final IngestMetrics metrics;
  private final Map<TopicPartition, Slot> slots = new HashMap<>();
  /** Assigned partitions paused until their checkpoints can be read (state-topic store), in assignment order. */
  private final Map<TopicPartition, Pending> pending = new java.util.LinkedHashMap<>();
  private final Map<TopicPartition, Long> positions = new ConcurrentHashMap<>();
  /**
   * How far each owned partition has been read since it was assigned, kept across rewinds: where a final checkpoint
   * must get back to when a failed commit rewound the partitions just before the stop.
   */
  private final Map<TopicPartition, Long> readUpTo = new HashMap<>();
  private volatile Set<TopicPartition> assignment = Set.of();

  PartitionSlots(Consumer<byte[], byte[]> consumer, CheckpointStore store, EngineLanes lanes, FrontSettings frontSettings,
      SegmentSettings segmentSettings, IngestMetrics metrics) {
    this.consumer = consumer;
    this.store = store;
    this.lanes = lanes;
    this.frontSettings = frontSettings;
    this.segmentSettings = segmentSettings;
    this.metrics = metrics;
  }

  /** The slot of {@code tp}, or null when this instance does not own it. */
  Slot get(TopicPartition tp) {
    return slots.get(tp);
  }

  /** The owned partitions (a live view: poll thread only). */
  Set<TopicPartition> owned() {
    return slots.keySet();
  }

  /** The partitions owned now (any thread). */
  Set<TopicPartition> assignment() {
    return assignment;
  }

  /** For each owned partition, the next offset to read (any thread). */
  Map<TopicPartition, Long> positions() {
    return Map.copyOf(positions);
  }

  /** {@code tp} is read up to {@code nextOffset} (exclusive) and differs from its last checkpoint. */
  void advance(TopicPartition tp, Slot slot, long nextOffset) {
    slot.nextOffset = nextOffset;
    slot.dirty = true;
    positions.put(tp, nextOffset);
    readUpTo.merge(tp, nextOffset, Math::max);
  }

  /**
   * The consumer has moved past transaction markers (or aborted records) after a partition's last record: the
   * state covers up to its position (else a quiet partition of a transactional producer would look behind).
   */
  void advanceToPositions() {
    slots.forEach((tp, slot) -> {
      if (slot.nextOffset < 0) {
        return;
      }
      try {
        long position = consumer.position(tp, java.time.Duration.ZERO);
        if (position > slot.nextOffset) {
          advance(tp, slot, position);
        }
      } catch (org.apache.kafka.common.KafkaException | IllegalStateException e) {
        // position not known right now: the next tick tries again
      }
    });
  }

  /** The owned partitions among {@code candidates} that changed since their last checkpoint. */
  List<TopicPartition> dirty(Collection<TopicPartition> candidates) {
    List<TopicPartition> dirty = new ArrayList<>();
    for (TopicPartition tp : candidates) {
      Slot slot = slots.get(tp);
      if (slot != null && slot.dirty) {
        dirty.add(tp);
      }
    }
    return dirty;
  }

  /** Marks {@code partitions} clean without a checkpoint (no store). */
  void markClean(List<TopicPartition> partitions) {
    partitions.forEach(tp -> slots.get(tp).dirty = false);
  }

  /** The next checkpoints of {@code partitions}: front, engines ({@code engines}), next offset, id one up. */
  List<PartitionCheckpoint> checkpointsOf(List<TopicPartition> partitions,
      Map<TopicPartition, EngineWorker.PartitionSnapshot> engines, long nowMillis) {
    List<PartitionCheckpoint> checkpoints = new ArrayList<>(partitions.size());
    for (TopicPartition tp : partitions) {
      Slot slot = slots.get(tp);
      EngineWorker.PartitionSnapshot snapshot = engines.get(tp);
      checkpoints.add(new PartitionCheckpoint(tp.topic(), tp.partition(), slot.nextOffset, slot.checkpointId + 1,
          nowMillis, slot.front.encode(), snapshot.all(), snapshot.segments()));
    }
    return checkpoints;
  }

  /** {@code checkpoints} are committed: their slots are clean and a rewind goes back to them. */
  void checkpointed(List<PartitionCheckpoint> checkpoints) {
    for (PartitionCheckpoint cp : checkpoints) {
      Slot slot = slots.get(new TopicPartition(cp.topic(), cp.partition()));
      slot.checkpointId = cp.checkpointId();
      slot.startOffset = -1;
      slot.dirty = false;
    }
  }

  /**
   * How far each owned partition has been read (those read at all), before any rewind since it was assigned: the
   * targets of the final checkpoint.
   */
  Map<TopicPartition, Long> readOffsets() {
    Map<TopicPartition, Long> target = new HashMap<>();
    slots.forEach((tp, slot) -> {
      if (slot.nextOffset >= 0) {
        target.put(tp, slot.nextOffset);
      }
    });
    readUpTo.forEach((tp, offset) -> {
      if (slots.containsKey(tp) || pending.containsKey(tp)) {
        target.merge(tp, offset, Math::max);
      }
    });
    return target;
  }

  /** True when every partition of {@code target} this instance still owns is restored and read up to its target offset. */
  boolean reached(Map<TopicPartition, Long> target) {
    for (Map.Entry<TopicPartition, Long> e : target.entrySet()) {
      if (pending.containsKey(e.getKey())) {
        return false;
      }
      Slot slot = slots.get(e.getKey());
      if (slot != null && slot.nextOffset < e.getValue()) {
        return false;
      }
    }
    return true;
  }

  /** Drops the state of every owned partition and reloads it from its checkpoint (seeking the consumer). */
  void rewindAll() {
    rewind(new ArrayList<>(slots.keySet()));
  }

  /** Drops the state of {@code partitions} and reloads it from their checkpoints (seeking the consumer). */
  void rewind(Collection<TopicPartition> partitions) {
    Map<TopicPartition, Long> starts = new HashMap<>();
    for (TopicPartition tp : partitions) {
      Slot slot = slots.get(tp);
      if (slot != null && slot.startOffset >= 0) {
        starts.put(tp, slot.startOffset);
      }
    }
    Map<TopicPartition, Long> read = new HashMap<>();
    partitions.forEach(tp -> {
      Long offset = readUpTo.get(tp);
      if (offset != null) {
        read.put(tp, offset);
      }
    });
    forget(partitions);
    readUpTo.putAll(read); // still ours: a final checkpoint reads them again up to here
    restore(partitions, starts);
  }

  void restore(Collection<TopicPartition> partitions) {
    restore(partitions, Map.of());
  }

  /** A restore waiting for its checkpoint: the lookup, and where to start without one. */
  private record Pending(CheckpointStore.Lookup lookup, Long start, OffsetAndMetadata committed) {}

  /**
   * Loads the partitions' checkpoints and seeks to the offsets they cover. A partition without a checkpoint
   * starts empty at {@code starts} (a rewind), else at its committed offset, else where the consumer's reset
   * policy puts it; that start is remembered, so that a later rewind goes back to it. A partition whose checkpoint
   * cannot be told yet (the state topic is still being read) is paused and restored by {@link #restorePending()}.
   */
  private void restore(Collection<TopicPartition> partitions, Map<TopicPartition, Long> starts) {
    if (partitions.isEmpty()) {
      return;
    }
    Map<TopicPartition, OffsetAndMetadata> committed = store.committed(consumer, new HashSet<>(partitions));
    List<TopicPartition> paused = new ArrayList<>();
    for (TopicPartition tp : partitions) {
      Pending wait = new Pending(store.lookup(tp, committed.get(tp)), starts.get(tp), committed.get(tp));
      if (wait.lookup().ready()) {
        place(tp, wait);
      } else {
        pending.put(tp, wait);
        paused.add(tp);
      }
    }
    if (!paused.isEmpty()) {
      consumer.pause(paused);
      LOG.debug("{} paused until their checkpoints are read", paused);
    }
    assignment = Set.copyOf(slots.keySet());
  }

  /** After every poll: restores (and resumes) the paused partitions whose checkpoints can be told now. */
  void restorePending() {
    if (pending.isEmpty()) {
      return;
    }
    List<TopicPartition> resumed = new ArrayList<>();
    for (java.util.Iterator<Map.Entry<TopicPartition, Pending>> it = pending.entrySet().iterator(); it.hasNext(); ) {
      Map.Entry<TopicPartition, Pending> e = it.next();
      if (e.getValue().lookup().ready()) {
        it.remove();
        place(e.getKey(), e.getValue());
        resumed.add(e.getKey());
      }
    }
    if (!resumed.isEmpty()) {
      consumer.resume(resumed);
      assignment = Set.copyOf(slots.keySet());
    }
  }

  /** Restores {@code tp} from its lookup's checkpoint, or starts it empty. */
  private void place(TopicPartition tp, Pending wait) {
    Optional<PartitionCheckpoint> checkpoint = wait.lookup().found();
    slots.put(tp, checkpoint.isPresent() ? restored(tp, checkpoint.get()) : fresh(tp, wait.start(), wait.committed()));
  }

  private Slot restored(TopicPartition tp, PartitionCheckpoint cp) {
    Slot slot = new Slot(PartitionFront.decode(cp.front(), frontSettings));
    Map<String, PairEngine> segments = new HashMap<>();
    cp.segments().forEach((name, bytes) -> segments.put(name, Snapshots.read(bytes)));
    List<String> dropped = SegmentEngines.droppedOnRestore(segments, segmentSettings);
    if (!dropped.isEmpty()) {
      LOG.warn("{}: the checkpoint holds segments {} of attributes no longer in segments.attributes; they are dropped",
          tp, dropped);
    }
    lanes.restore(tp, Snapshots.read(cp.engine()), segments).join();
    consumer.seek(tp, cp.nextOffset());
    slot.nextOffset = cp.nextOffset();
    slot.checkpointId = cp.checkpointId();
    positions.put(tp, cp.nextOffset());
    metrics.restored();
    LOG.info("restored {} from checkpoint {} (next offset {})", tp, cp.checkpointId(), cp.nextOffset());
    return slot;
  }

  private Slot fresh(TopicPartition tp, Long rewindTo, OffsetAndMetadata committed) {
    Slot slot = new Slot(new PartitionFront(frontSettings));
    lanes.drop(List.of(tp)).join();
    long start;
    if (rewindTo != null) {
      start = rewindTo;
    } else if (committed != null) {
      start = committed.offset();
      LOG.warn("{} has committed offset {} but no checkpoint: its earlier baskets are not in this state", tp, start);
    } else {
      start = consumer.position(tp);
    }
    consumer.seek(tp, start);
    slot.startOffset = start;
    return slot;
  }

  void forget(Collection<TopicPartition> partitions) {
    lanes.drop(partitions).join();
    for (TopicPartition tp : partitions) {
      slots.remove(tp);
      pending.remove(tp);
      positions.remove(tp);
      readUpTo.remove(tp);
      metrics.forgetPartition(tp.topic(), tp.partition());
    }
    assignment = Set.copyOf(slots.keySet());
  }

  /**
   * The consumer's rebalance listener: checkpoints what is revoked (group mode: everything dirty) with
   * {@code checkpoint}, restores what is assigned; after a failure ({@code failed}) it only forgets.
   */
  ConsumerRebalanceListener listener(Predicate<Collection<TopicPartition>> checkpoint, BooleanSupplier failed) {
    return new ConsumerRebalanceListener() {
      @Override
      public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        if (partitions.isEmpty()) {
          return;
        }
        if (!failed.getAsBoolean()) {
          checkpoint.test(partitions);
        }
        forget(partitions);
      }

      @Override
      public void onPartitionsLost(Collection<TopicPartition> partitions) {
        LOG.warn("lost {} without a clean hand-over; their work since the last checkpoint is redone by the next owner",
            partitions);
        boolean othersToo = !failed.getAsBoolean() && store.discardUncommitted();
        forget(partitions);
        if (othersToo) {
          rewindAll();
        }
      }

      @Override
      public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
        if (!failed.getAsBoolean()) {
          restore(partitions);
        }
      }
    };
  }
}
