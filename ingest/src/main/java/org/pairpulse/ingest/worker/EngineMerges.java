package org.pairpulse.ingest.worker;

import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SortedMap;
import java.util.TreeMap;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.table.PairTable;

/**
 * Merges of engines over disjoint streams into new engines, and the pair tables of a refresh built from them.
 * One {@link EngineWorker} merges its partitions with these, and {@link EngineLanes} merges its lanes' results
 * with the same code, so that both publish the same thing ({@link PairEngine#merge} semantics: sketches and basket
 * counts add exactly; tracked tables by the mergeable-summary rule).
 */
final class EngineMerges {
  private EngineMerges() {}

  /**
   * Merged engines of one set of partitions, taken at one point of their writer's command order.
   *
   * @param all the merge of the partitions' {@value SegmentSettings#ALL} engines
   * @param segments the merge per segment name, in name order
   */
  record Merged(PairEngine all, SortedMap<String, PairEngine> segments) {}

  /** A new engine holding {@code engines} merged in list order. */
  static PairEngine merge(EngineConfig config, List<PairEngine> engines) {
    PairEngine merged = new PairEngine(config);
    engines.forEach(merged::merge);
    return merged;
  }

  /** New engines per segment name (in name order), each the merge of that name's engines in list order. */
  static SortedMap<String, PairEngine> mergeSegments(EngineConfig segmentConfig,
      List<? extends Map<String, PairEngine>> segmentsInOrder) {
    SortedMap<String, PairEngine> merged = new TreeMap<>();
    for (Map<String, PairEngine> segments : segmentsInOrder) {
      segments.forEach((name, engine) -> merged.computeIfAbsent(name, n -> new PairEngine(segmentConfig)).merge(engine));
    }
    return merged;
  }

  /**
   * The merge of whole partitions in the given order (the group view: partitions counted here and partitions read
   * from other instances' checkpoints, in partition order, which is the order a single instance owning every
   * partition merges them in, so that both publish the same table).
   */
  static Merged mergeInOrder(EngineConfig config, EngineConfig segmentConfig, Iterable<PartitionEngines> partitions) {
    PairEngine all = new PairEngine(config);
    java.util.List<Map<String, PairEngine>> segments = new java.util.ArrayList<>();
    for (PartitionEngines partition : partitions) {
      all.merge(partition.all());
      segments.add(partition.segments());
    }
    return new Merged(all, mergeSegments(segmentConfig, segments));
  }

  /**
   * The pair tables of a refresh: segment {@value SegmentSettings#ALL} first, then every segment in name order. A
   * segment's merge is advanced to the watermark of {@value SegmentSettings#ALL} (it is modified), so that its
   * windows end where {@value SegmentSettings#ALL}'s do even when the segment's newest basket is older.
   */
  static Map<String, PairTable> tables(Merged merged, long version, long publishedAtMillis) {
    PairTables.Options options = PairTables.Options.of(version, publishedAtMillis);
    Map<String, PairTable> tables = new LinkedHashMap<>();
    PairEngine all = merged.all();
    tables.put(SegmentSettings.ALL, all.refresh(options));
    merged.segments().forEach((name, segment) -> {
      if (all.watermarkMillis() != Long.MIN_VALUE) {
        segment.advanceTo(all.watermarkMillis());
      }
      tables.put(name, segment.refresh(options));
    });
    return tables;
  }
}
