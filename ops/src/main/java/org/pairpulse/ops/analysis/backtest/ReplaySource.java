package org.pairpulse.ops.analysis.backtest;

import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.FutureTask;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.function.Consumer;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ingest.file.ReadProgress;
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
 * Unusable lines are counted per reason in the result. Not thread-safe: one read at a time ({@link #readAhead}
 * reads on a thread of its own and hands the baskets to the caller's).
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

  /** Baskets handed from the reading thread to the replaying one at a time (one queue hand-off each). */
  static final int BATCH_BASKETS = 512;
  /** Batches the reading thread may be ahead by. */
  static final int BATCHES_AHEAD = 16;

  /**
   * As {@link #read}, with the file read, decoded, deduplicated and assembled on a second thread while
   * {@code sink} runs on the caller's: the baskets reach {@code sink} in the same order, with the same contents,
   * so whatever the sink computes is the same as with {@link #read}; a replay uses two cores. The reading thread
   * stays at most {@value #BATCHES_AHEAD} batches of {@value #BATCH_BASKETS} baskets ahead. An exception of either
   * side stops both and is thrown here. {@code progress} is called on the reading thread.
   */
  public FileSource.Result readAhead(Path file, ReadProgress progress, Consumer<ReplayBasket> sink)
      throws IOException {
    Objects.requireNonNull(sink, "sink");
    BlockingQueue<List<ReplayBasket>> queue = new ArrayBlockingQueue<>(BATCHES_AHEAD);
    AtomicBoolean stopped = new AtomicBoolean();
    FutureTask<FileSource.Result> reading = new FutureTask<>(() -> {
      Batch batch = new Batch();
      try {
        FileSource.Result result = read(file, progress, basket -> {
          batch.baskets.add(basket);
          if (batch.baskets.size() == BATCH_BASKETS) {
            hand(queue, batch.baskets, stopped);
            batch.baskets = new ArrayList<>(BATCH_BASKETS);
          }
        });
        hand(queue, batch.baskets, stopped);
        return result;
      } finally {
        hand(queue, END, stopped);
      }
    });
    Thread reader = new Thread(reading, "pairpulse-replay-reader");
    reader.setDaemon(true);
    reader.start();
    try {
      for (List<ReplayBasket> next = queue.take(); next != END; next = queue.take()) {
        for (ReplayBasket basket : next) {
          sink.accept(basket);
        }
      }
      return reading.get();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IOException("interrupted while replaying " + file, e);
    } catch (ExecutionException e) {
      Throwable cause = e.getCause();
      if (cause instanceof IOException io) {
        throw io;
      }
      if (cause instanceof RuntimeException runtime) {
        throw runtime;
      }
      throw new IOException(cause);
    } finally {
      stopped.set(true);
      reader.interrupt();
    }
  }

  private static final List<ReplayBasket> END = List.of();

  /** The batch being filled on the reading thread. */
  private static final class Batch {
    List<ReplayBasket> baskets = new ArrayList<>(BATCH_BASKETS);
  }

  /** Puts {@code batch} on the queue unless the replaying side has stopped. */
  private static void hand(BlockingQueue<List<ReplayBasket>> queue, List<ReplayBasket> batch, AtomicBoolean stopped) {
    try {
      while (!stopped.get() && !queue.offer(batch, 100, TimeUnit.MILLISECONDS)) {
        // the replaying side is behind: wait for room
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("replay stopped", e);
    }
  }

  /** Reads {@code file} to its end, then closes its open baskets; {@code progress} may be null. */
  public FileSource.Result read(Path file, ReadProgress progress, Consumer<ReplayBasket> sink) throws IOException {
    target = Objects.requireNonNull(sink, "sink");
    try {
      return files.read(file, progress);
    } finally {
      target = null;
    }
  }
}
