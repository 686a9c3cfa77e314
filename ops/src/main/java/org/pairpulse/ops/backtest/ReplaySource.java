package org.pairpulse.ops.backtest;

import java.io.IOException;
import java.nio.file.Path;
import java.util.Objects;
import java.util.function.Consumer;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ingest.file.ProgressDisplay;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;

/**
 * Reads a basket file through ingest's {@link FileSource} (the same decoding, CSV rules, lateness, dedupe and
 * line-item assembly) and hands each basket, with its id and attributes, to a consumer <em>before</em>
 * anything counts it: the evaluation tests a basket before it trains the state, and refreshes follow the
 * baskets' event time.
 *
 * <p>Formats: JSON lines ({@code .jsonl}, {@code .ndjson}, {@code .json}) and CSV ({@code .csv}, rows
 * {@code basket_id,timestamp,item}, RFC 4180 quoting, optional header), either gzip-compressed ({@code .gz}).
 * Unusable lines are counted per reason in the result. Not thread-safe.
 */
public final class ReplaySource {
  private final FileSource files;
  private Consumer<ReplayBasket> target;

  public ReplaySource(EventLimits limits, FrontSettings settings) {
    this.files = new FileSource(limits, settings, BasketSink.withAttributes((basketId, eventMillis, items, attributes) ->
        target.accept(new ReplayBasket(basketId, eventMillis, items, attributes))), null);
  }

  /** The front (watermark, counters), shared by every file read through this source. */
  public PartitionFront front() {
    return files.front();
  }

  /** Reads {@code file} to its end, then closes its open baskets; {@code progress} may be null. */
  public FileSource.Result read(Path file, ProgressDisplay progress, Consumer<ReplayBasket> sink) throws IOException {
    target = Objects.requireNonNull(sink, "sink");
    try {
      return files.read(file, progress);
    } finally {
      target = null;
    }
  }
}
