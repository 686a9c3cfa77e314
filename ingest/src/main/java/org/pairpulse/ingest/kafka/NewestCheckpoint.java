package org.pairpulse.ingest.kafka;

import java.util.SortedMap;
import java.util.TreeMap;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.worker.PartitionEngines;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;

/**
 * The newest committed checkpoint of one input partition that the {@link StateTap} has read, with its engines decoded
 * on first need (never changed afterwards). Any thread.
 */
final class NewestCheckpoint {
  private final PartitionCheckpoint checkpoint;
  private PartitionEngines decoded; // guarded by this

  NewestCheckpoint(PartitionCheckpoint checkpoint) {
    this.checkpoint = checkpoint;
  }

  PartitionCheckpoint checkpoint() {
    return checkpoint;
  }

  /** The checkpoint's engines, decoded once (the first caller decodes, the others wait for it). */
  synchronized PartitionEngines decoded() {
    if (decoded == null) {
      SortedMap<String, PairEngine> segments = new TreeMap<>();
      checkpoint.segments().forEach((name, bytes) -> segments.put(name, Snapshots.read(bytes)));
      decoded = new PartitionEngines(Snapshots.read(checkpoint.engine()), segments);
    }
    return decoded;
  }
}
