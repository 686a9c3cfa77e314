package org.pairpulse.ops.analysis.report;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SortedMap;
import java.util.TreeMap;
import java.util.stream.Stream;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.file.ReadProgress;
import org.pairpulse.ingest.segment.SegmentEngines;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.ReplaySource;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.table.PairTable;

/**
 * Where the report's pair tables come from: a replayed basket file (segmented as ingest segments it) or a saved
 * state (an engine snapshot, an ingest partition checkpoint, or a directory of them, with their segments).
 */
public final class ReportSources {
  /** Name of the segment of every basket. */
  public static final String ALL = SegmentSettings.ALL;

  private ReportSources() {}

  /**
   * Replays {@code file} as ingest counts it: one engine for all baskets and one per segment
   * ({@code attribute=value}, {@link SegmentEngines}: the same value rules, bound and segment engine configuration),
   * and refreshes them all at the newest event time.
   *
   * @param skipped told about each basket whose attribute value made no segment (never silent), may be null
   * @return the tables, {@code all} first, then the segments in name order
   */
  public static Map<String, PairTable> replay(Path file, EngineConfig engineConfig, BacktestSettings input,
      SegmentSettings segments, SegmentEngines.SkipListener skipped, ReadProgress progress) throws IOException {
    SegmentEngines engines = new SegmentEngines(engineConfig, segments, skipped);
    ReplaySource source = new ReplaySource(input.limits(), input.front());
    source.read(file, progress, basket -> engines.addBasket(basket.eventMillis(),
        basket.items().toArray(new String[0]), basket.attributes()));
    return tables(engines.all(), engines.segments());
  }

  /**
   * The tables of a saved state: an engine snapshot (sketch's format, segment {@code all} only), an ingest partition
   * checkpoint ({@code .ckpt}, with its segments), or a directory of partition checkpoints (a local
   * {@code checkpoint.dir}: every {@code *.ckpt} in it, merged per segment as ingest merges partitions).
   *
   * @param attributes keep only the segments of these attributes; empty: every segment the state holds
   * @throws IllegalArgumentException when the state holds no segment of a requested attribute
   */
  public static Map<String, PairTable> snapshot(Path path, List<String> attributes) throws IOException {
    PairEngine all = null;
    SortedMap<String, PairEngine> segments = new TreeMap<>();
    for (Path file : files(path)) {
      byte[] bytes = Files.readAllBytes(file);
      byte[] engineBytes = bytes;
      Map<String, byte[]> segmentBytes = Map.of();
      if (isCheckpoint(bytes)) {
        PartitionCheckpoint checkpoint = PartitionCheckpoint.decode(bytes);
        engineBytes = checkpoint.engine();
        segmentBytes = checkpoint.segments();
      }
      PairEngine engine = Snapshots.read(engineBytes);
      if (all == null) {
        all = new PairEngine(engine.config());
      }
      all.merge(engine);
      segmentBytes.forEach((name, state) -> {
        if (attributes.isEmpty() || attributes.contains(SegmentSettings.attributeOf(name))) {
          PairEngine segment = Snapshots.read(state);
          segments.computeIfAbsent(name, n -> new PairEngine(segment.config())).merge(segment);
        }
      });
    }
    for (String attribute : attributes) {
      if (segments.keySet().stream().noneMatch(name -> attribute.equals(SegmentSettings.attributeOf(name)))) {
        throw new IllegalArgumentException("the saved state " + path + " holds no segment of attribute '" + attribute
            + "' (ingest counts segments only for its segments.attributes)");
      }
    }
    return tables(all, segments);
  }

  /** The engine configuration stored in a saved state (for its horizons). */
  public static EngineConfig snapshotConfig(Path path) throws IOException {
    byte[] bytes = Files.readAllBytes(files(path).get(0));
    if (isCheckpoint(bytes)) {
      bytes = PartitionCheckpoint.decode(bytes).engine();
    }
    return Snapshots.configOf(bytes);
  }

  private static List<Path> files(Path path) throws IOException {
    if (!Files.isDirectory(path)) {
      return List.of(path);
    }
    List<Path> files;
    try (Stream<Path> listed = Files.list(path)) {
      files = new ArrayList<>(listed.filter(p -> p.getFileName().toString().endsWith(".ckpt") && Files.isRegularFile(p))
          .sorted().toList());
    }
    if (files.isEmpty()) {
      throw new IllegalArgumentException("no partition checkpoint (*.ckpt) in " + path);
    }
    return files;
  }

  private static boolean isCheckpoint(byte[] bytes) {
    return bytes.length >= 4 && bytes[0] == 'P' && bytes[1] == 'P' && bytes[2] == 'C' && bytes[3] == 'K';
  }

  /** Refreshes {@code all} and each segment at {@code all}'s watermark, so that every window ends there. */
  private static Map<String, PairTable> tables(PairEngine all, Map<String, PairEngine> segments) {
    long asOf = all.watermarkMillis();
    Map<String, PairTable> tables = new LinkedHashMap<>();
    tables.put(ALL, refresh(all, asOf));
    segments.forEach((name, engine) -> tables.put(name, refresh(engine, asOf)));
    return tables;
  }

  private static PairTable refresh(PairEngine engine, long asOfMillis) {
    if (asOfMillis != Long.MIN_VALUE) {
      engine.advanceTo(asOfMillis);
    }
    return engine.refresh(PairTables.Options.of(1, asOfMillis == Long.MIN_VALUE ? 0 : asOfMillis));
  }
}
