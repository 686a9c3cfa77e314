package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.Collections;
import java.util.Deque;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.SortedMap;
import java.util.TreeMap;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentLinkedDeque;
import java.util.concurrent.ConcurrentSkipListMap;
import java.util.function.LongSupplier;
import java.util.function.Supplier;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.common.TopicPartition;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ingest.worker.EngineLanes;
import org.pairpulse.ingest.worker.PartitionEngines;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import org.pairpulse.sketch.table.PairTableSource;

/**
 * An ingestor's refreshes and what they published: the table of segment {@code all}, one table per other segment
 * ({@code attribute=value}) that some refresh has held, the newest refresh durations and, in group mode with
 * {@code group.view}, the {@link GroupView} whose remote partitions each refresh merges in and the coverage of the
 * newest table.
 *
 * <p>Threading: {@link #openGroupView}, {@link #refresh}, {@link #tick} and {@link #close} on the poll thread; a refresh's
 * callback (an engine thread) publishes; the readers ({@link #all()}, {@link #segments()}, ...) may be called from
 * any thread and see each table whole.
 */
final class TablePublisher {
  /** Refresh durations kept for {@link #recentRefreshMillis()}. */
  private static final int REFRESHES_KEPT = 1024;

  private final IngestMetrics metrics;
  private final PairTableHolder all = new PairTableHolder();
  private final Map<String, PairTableHolder> segments = new ConcurrentSkipListMap<>();
  /** Durations of the newest refreshes (merge and tables), in ms, oldest first. */
  private final Deque<Double> refreshMillis = new ConcurrentLinkedDeque<>();
  private volatile GroupCoverage coverage;

  // poll thread only
  private GroupView groupView;
  private Admin viewAdmin;
  private long tableVersion;
  private CompletableFuture<?> pending = CompletableFuture.completedFuture(null);

  TablePublisher(IngestMetrics metrics) {
    this.metrics = metrics;
  }

  /**
   * From now on each refresh merges the group's other partitions, read from their newest checkpoints in the state
   * topic (group mode with {@code group.view}); a partition behind by more than {@code group.view.stale.ms} marks
   * the view partial.
   */
  void openGroupView(IngestConfig config, KafkaClientProperties clients, EngineConfig engineConfig, LongSupplier clock,
      Supplier<Set<TopicPartition>> owned, StateTap tap) {
    viewAdmin = Admin.create(clients.admin("admin"));
    groupView = new GroupView(config.topics(), engineConfig, config.groupViewStaleMs(), tap, viewAdmin, clock, owned);
  }

  /** The poll loop's tick: the group view asks for the log end offsets (poll thread). */
  void tick() {
    if (groupView != null) {
      groupView.tick();
    }
  }

  /** True while the previous refresh has not published yet (a refresh is not started on top of it). */
  boolean refreshing() {
    return !pending.isDone();
  }

  /**
   * Starts a refresh of the lanes' engines (with the group view's remote partitions, if any); its tables are
   * published when it completes.
   */
  void refresh(EngineLanes lanes, Set<TopicPartition> owned, Map<TopicPartition, Long> positions, long nowMillis) {
    long startNanos = System.nanoTime();
    CompletableFuture<Map<String, PairTable>> refreshed;
    GroupCoverage covered;
    if (groupView != null) {
      SortedMap<TopicPartition, PartitionEngines> remote = groupView.remote(owned);
      covered = groupView.coverage(owned, positions, nowMillis);
      refreshed = lanes.refresh(++tableVersion, nowMillis, remote);
    } else {
      covered = null;
      refreshed = lanes.refresh(++tableVersion, nowMillis);
    }
    pending = refreshed.thenAccept(tables -> {
      long tookNanos = System.nanoTime() - startNanos;
      metrics.refreshed(tookNanos); // before the tables are visible: a reader sees both
      publish(tables, covered, tookNanos);
    });
  }

  PairTableSource all() {
    return all;
  }

  /** The other segments' sources by name, in name order. */
  Map<String, PairTableSource> segments() {
    return Collections.unmodifiableMap(new TreeMap<>(segments));
  }

  Optional<GroupCoverage> coverage() {
    return Optional.ofNullable(coverage);
  }

  List<Double> recentRefreshMillis() {
    return List.copyOf(refreshMillis);
  }

  PairTable current() {
    return all.current();
  }

  /** Publishes a refresh: all, every segment in it, and an empty table for known segments no partition holds now. */
  private void publish(Map<String, PairTable> refreshed, GroupCoverage covered, long tookNanos) {
    refreshMillis.addLast(tookNanos / 1e6);
    while (refreshMillis.size() > REFRESHES_KEPT) {
      refreshMillis.pollFirst();
    }
    coverage = covered;
    PairTable table = refreshed.get(SegmentSettings.ALL);
    all.publish(table);
    refreshed.forEach((name, segmentTable) -> {
      if (!name.equals(SegmentSettings.ALL)) {
        segments.computeIfAbsent(name, n -> new PairTableHolder()).publish(segmentTable);
      }
    });
    segments.forEach((name, holder) -> {
      if (!refreshed.containsKey(name)) {
        holder.publish(new PairTable(table.version(), table.publishedAtMillis(), table.watermarkMillis(),
            table.sortMeasure(), Map.of(), List.of()));
      }
    });
  }

  /** Closes the group view's clients. */
  void close() {
    if (groupView != null) {
      groupView.close();
    }
    if (viewAdmin != null) {
      viewAdmin.close(Duration.ofSeconds(5));
    }
  }
}
