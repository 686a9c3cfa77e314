package org.pairpulse.ops.report;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.pairpulse.ingest.checkpoint.PartitionCheckpoint;
import org.pairpulse.ingest.file.ProgressDisplay;
import org.pairpulse.ops.backtest.BacktestSettings;
import org.pairpulse.ops.backtest.ReplaySource;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.table.PairTable;

/** Where the report's pair tables come from: a replayed basket file (with segments) or a saved state. */
public final class ReportSources {
  /** Name of the segment of every basket. */
  public static final String ALL = "all";
  /** Most segments one report builds (each is an engine of its own). */
  public static final int MAX_SEGMENTS = 64;

  private ReportSources() {}

  /**
   * Replays {@code file} into one engine for all baskets and one per value of each segment attribute
   * ({@code attribute=value}), and refreshes them all at the newest event time.
   *
   * @return the tables, {@code all} first, then the segments in name order
   */
  public static Map<String, PairTable> replay(Path file, EngineConfig engineConfig, BacktestSettings input,
      List<String> segmentAttributes, ProgressDisplay progress) throws IOException {
    PairEngine all = new PairEngine(engineConfig);
    Map<String, PairEngine> segments = new TreeMap<>();
    ReplaySource source = new ReplaySource(input.limits(), input.front());
    source.read(file, progress, basket -> {
      all.addBasket(basket.eventMillis(), basket.items());
      for (String attribute : segmentAttributes) {
        String value = basket.attributes().get(attribute);
        if (value == null) {
          continue;
        }
        String name = attribute + "=" + value;
        PairEngine engine = segments.get(name);
        if (engine == null) {
          if (segments.size() == MAX_SEGMENTS) {
            throw new IllegalArgumentException("more than " + MAX_SEGMENTS + " segments (attribute '" + attribute
                + "' has many values); name coarser segment attributes");
          }
          engine = new PairEngine(engineConfig);
          segments.put(name, engine);
        }
        engine.addBasket(basket.eventMillis(), basket.items());
      }
    });
    long asOf = all.watermarkMillis();
    Map<String, PairTable> tables = new LinkedHashMap<>();
    tables.put(ALL, refresh(all, asOf));
    for (Map.Entry<String, PairEngine> entry : segments.entrySet()) {
      tables.put(entry.getKey(), refresh(entry.getValue(), asOf));
    }
    return tables;
  }

  /**
   * The table of a saved state: an engine snapshot (sketch's format) or an ingest partition checkpoint
   * ({@code .ckpt}, whose engine snapshot is used).
   */
  public static Map<String, PairTable> snapshot(Path file) throws IOException {
    byte[] bytes = Files.readAllBytes(file);
    byte[] engineBytes = bytes;
    if (bytes.length >= 4 && bytes[0] == 'P' && bytes[1] == 'P' && bytes[2] == 'C' && bytes[3] == 'K') {
      engineBytes = PartitionCheckpoint.decode(bytes).engine();
    }
    PairEngine engine = Snapshots.read(engineBytes);
    Map<String, PairTable> tables = new LinkedHashMap<>();
    tables.put(ALL, refresh(engine, engine.watermarkMillis()));
    return tables;
  }

  /** The engine configuration stored in a saved state (for its horizons). */
  public static EngineConfig snapshotConfig(Path file) throws IOException {
    byte[] bytes = Files.readAllBytes(file);
    if (bytes.length >= 4 && bytes[0] == 'P' && bytes[1] == 'P' && bytes[2] == 'C' && bytes[3] == 'K') {
      bytes = PartitionCheckpoint.decode(bytes).engine();
    }
    return Snapshots.configOf(bytes);
  }

  private static PairTable refresh(PairEngine engine, long asOfMillis) {
    if (asOfMillis != Long.MIN_VALUE) {
      engine.advanceTo(asOfMillis);
    }
    return engine.refresh(PairTables.Options.of(1, asOfMillis == Long.MIN_VALUE ? 0 : asOfMillis));
  }
}
