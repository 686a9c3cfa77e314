package org.pairpulse.ingest.worker;

import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import java.util.function.Function;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.table.PairTable;

/**
 * The single writer of a set of per-partition {@link PairEngine}s.
 *
 * <p>Every operation is a command executed in submission order, either on the worker's own thread
 * ({@code ownThread = true}: the poll loop decodes the next batch while this one is counted) or inline on
 * the caller's thread. Because the order is kept, a snapshot command sees exactly the baskets submitted
 * before it: that is what makes a checkpoint consistent with its offsets.
 *
 * <h2>Backpressure</h2>
 * At most {@code queueCapacity} commands wait; {@link #apply} blocks while the queue is full, so a slow
 * engine slows the poll loop instead of filling the heap.
 *
 * <h2>Failure</h2>
 * An exception in the engine stops the worker; later calls throw {@link IllegalStateException} with it as
 * the cause, and the ingestor stops without committing, so nothing is lost.
 */
public final class EngineWorker implements AutoCloseable {
  private final EngineConfig config;
  private final IngestMetrics metrics;
  private final Map<TopicPartition, PairEngine> engines = new HashMap<>(); // worker thread only
  private final BlockingQueue<Runnable> queue;
  private final Thread thread;
  private volatile Throwable failure;
  private volatile boolean closing;

  public EngineWorker(EngineConfig config, IngestMetrics metrics, boolean ownThread, int queueCapacity) {
    this.config = Objects.requireNonNull(config, "config");
    this.metrics = Objects.requireNonNull(metrics, "metrics");
    if (ownThread) {
      this.queue = new ArrayBlockingQueue<>(Math.max(1, queueCapacity));
      this.thread = new Thread(this::run, "pairpulse-engine");
      this.thread.setDaemon(true);
      this.thread.start();
    } else {
      this.queue = null;
      this.thread = null;
    }
  }

  public EngineConfig config() {
    return config;
  }

  private void run() {
    try {
      while (true) {
        Runnable command = queue.poll(100, TimeUnit.MILLISECONDS);
        if (command != null) {
          command.run();
        } else if (closing) {
          return;
        }
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    } catch (Throwable t) {
      failure = t;
    }
  }

  /** Counts a batch of baskets of {@code partition}; blocks while the queue is full. */
  public void apply(TopicPartition partition, BasketBatch batch) throws InterruptedException {
    if (batch.size() == 0) {
      return;
    }
    submit(() -> applyNow(partition, batch));
  }

  private void applyNow(TopicPartition partition, BasketBatch batch) {
    PairEngine engine = engines.get(partition);
    if (engine == null) {
      engine = new PairEngine(config);
      engines.put(partition, engine);
      updateStateBytes();
    }
    long pairsBefore = engine.stats().pairUpdates();
    for (int i = 0; i < batch.size(); i++) {
      engine.addBasket(batch.timeAt(i), batch.itemsAt(i));
    }
    metrics.counted(batch.size(), engine.stats().pairUpdates() - pairsBefore);
  }

  /** Snapshots of the given partitions' engines (a fresh engine's for one that has none yet). */
  public CompletableFuture<Map<TopicPartition, byte[]>> snapshot(Collection<TopicPartition> partitions) {
    List<TopicPartition> list = new ArrayList<>(partitions);
    return call(() -> {
      Map<TopicPartition, byte[]> out = new HashMap<>();
      for (TopicPartition tp : list) {
        PairEngine engine = engines.get(tp);
        out.put(tp, Snapshots.write(engine != null ? engine : new PairEngine(config)));
      }
      return out;
    });
  }

  /** Replaces a partition's engine with a restored one (built on the caller's thread, handed over). */
  public CompletableFuture<Void> restore(TopicPartition partition, PairEngine engine) {
    if (!engine.config().equals(config)) {
      throw new IllegalArgumentException("checkpoint of " + partition + " was written with another engine configuration:\n  "
          + engine.config() + "\nconfigured:\n  " + config);
    }
    return call(() -> {
      engines.put(partition, engine);
      updateStateBytes();
      return null;
    });
  }

  /** Forgets partitions (revoked or lost, or about to be restored afresh). */
  public CompletableFuture<Void> drop(Collection<TopicPartition> partitions) {
    List<TopicPartition> list = new ArrayList<>(partitions);
    return call(() -> {
      list.forEach(engines::remove);
      updateStateBytes();
      return null;
    });
  }

  /** A new engine holding the merge of every partition's engine (the instance's view). */
  public CompletableFuture<PairEngine> mergedCopy() {
    return call(this::mergeNow);
  }

  /** Merges the partitions' engines and builds a pair table from the merge (a refresh). */
  public CompletableFuture<PairTable> refresh(long version, long publishedAtMillis) {
    return call(() -> mergeNow().refresh(PairTables.Options.of(version, publishedAtMillis)));
  }

  /** Runs {@code reader} on a copy of one partition's engine (null if the partition has none). */
  public <T> CompletableFuture<T> read(TopicPartition partition, Function<PairEngine, T> reader) {
    return call(() -> {
      PairEngine engine = engines.get(partition);
      return reader.apply(engine == null ? null : engine.copy());
    });
  }

  /** Waits until every command submitted so far has run. */
  public void drain() {
    call(() -> null).join();
  }

  private PairEngine mergeNow() {
    PairEngine merged = new PairEngine(config);
    engines.keySet().stream()
        .sorted((a, b) -> a.topic().equals(b.topic()) ? Integer.compare(a.partition(), b.partition()) : a.topic().compareTo(b.topic()))
        .forEach(tp -> merged.merge(engines.get(tp)));
    return merged;
  }

  private void updateStateBytes() {
    long bytes = 0;
    for (PairEngine engine : engines.values()) {
      bytes += engine.stateBytes();
    }
    metrics.stateBytes(bytes);
  }

  private interface Task<T> {
    T run();
  }

  private <T> CompletableFuture<T> call(Task<T> task) {
    CompletableFuture<T> result = new CompletableFuture<>();
    Runnable command = () -> {
      try {
        result.complete(task.run());
      } catch (RuntimeException | Error e) {
        result.completeExceptionally(e);
        throw e;
      }
    };
    try {
      submit(command);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      result.completeExceptionally(e);
    } catch (RuntimeException e) {
      result.completeExceptionally(e);
    }
    return result;
  }

  private void submit(Runnable command) throws InterruptedException {
    checkHealthy();
    if (thread == null) {
      try {
        command.run();
      } catch (RuntimeException | Error e) {
        failure = e;
        throw e;
      }
      return;
    }
    while (!queue.offer(command, 200, TimeUnit.MILLISECONDS)) {
      checkHealthy();
    }
  }

  private void checkHealthy() {
    Throwable t = failure;
    if (t != null) {
      throw new IllegalStateException("the engine worker failed: " + t, t);
    }
    if (thread != null && !thread.isAlive()) {
      throw new IllegalStateException("the engine worker has stopped");
    }
  }

  /** The exception that stopped the worker, or null. */
  public Throwable failure() {
    return failure;
  }

  /** Runs what was submitted, then stops the thread. */
  @Override
  public void close() {
    closing = true;
    if (thread != null) {
      try {
        thread.join(TimeUnit.SECONDS.toMillis(60));
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
    }
  }
}
