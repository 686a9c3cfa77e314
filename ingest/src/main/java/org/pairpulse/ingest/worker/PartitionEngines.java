package org.pairpulse.ingest.worker;

import java.util.Collections;
import java.util.Objects;
import java.util.SortedMap;
import java.util.TreeMap;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * The engines of one partition that another instance counts, as its newest checkpoint holds them (the group view
 * merges them with the partitions counted here). Read only: a merge reads them and never changes them.
 *
 * @param all the engine of segment {@code all}
 * @param segments the engines of the other segments by name, in name order
 */
public record PartitionEngines(PairEngine all, SortedMap<String, PairEngine> segments) {
  public PartitionEngines {
    Objects.requireNonNull(all, "all");
    segments = Collections.unmodifiableSortedMap(new TreeMap<>(segments));
  }
}
