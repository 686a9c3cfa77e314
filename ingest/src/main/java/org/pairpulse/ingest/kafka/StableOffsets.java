package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.ListConsumerGroupOffsetsOptions;
import org.apache.kafka.clients.admin.ListConsumerGroupOffsetsSpec;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;

/**
 * A consumer group's committed offsets as an outside reader must see them when the group commits in transactions.
 *
 * <p>A transactional offset commit becomes visible only once its transaction's markers are written, which the
 * transaction coordinator does after {@code commitTransaction} has returned. A plain offset fetch right after a
 * commit can therefore still answer the previous offsets, which point at the previous checkpoint (KIP-447, "Producer
 * scalability for exactly once semantics", 2020: the {@code require_stable} flag of OffsetFetch). So this asks with
 * {@code requireStable}: the coordinator then answers {@code UNSTABLE_OFFSET_COMMIT} for a partition with an offset
 * commit still pending in an open transaction, which Kafka's admin client leaves out of its answer; the partition
 * is asked again until it is stable. (A {@code read_committed} consumer's own {@code committed()} asks this way by
 * itself.)
 */
public final class StableOffsets {
  private static final long RETRY_MILLIS = 100;

  private StableOffsets() {}

  /**
   * The committed offset of every partition of {@code partitions} for {@code group}, null for a partition never
   * committed; waits while a partition's commit is pending in an open transaction, up to {@code timeout}.
   *
   * @throws TimeoutException when a partition's commit is still pending after {@code timeout}
   */
  public static Map<TopicPartition, OffsetAndMetadata> committed(Admin admin, String group,
      Collection<TopicPartition> partitions, Duration timeout) throws InterruptedException, ExecutionException, TimeoutException {
    long deadline = System.nanoTime() + timeout.toNanos();
    Map<TopicPartition, OffsetAndMetadata> stable = new HashMap<>();
    List<TopicPartition> pending = List.copyOf(partitions);
    while (true) {
      ListConsumerGroupOffsetsSpec spec = new ListConsumerGroupOffsetsSpec().topicPartitions(pending);
      Map<TopicPartition, OffsetAndMetadata> answer = admin.listConsumerGroupOffsets(Map.of(group, spec),
          new ListConsumerGroupOffsetsOptions().requireStable(true)).partitionsToOffsetAndMetadata(group)
          .get(Math.max(1, TimeUnit.NANOSECONDS.toMillis(deadline - System.nanoTime())), TimeUnit.MILLISECONDS);
      for (TopicPartition tp : pending) {
        if (answer.containsKey(tp)) {
          stable.put(tp, answer.get(tp));
        }
      }
      pending = pending.stream().filter(tp -> !stable.containsKey(tp)).toList();
      if (pending.isEmpty()) {
        return stable;
      }
      if (System.nanoTime() > deadline) {
        throw new TimeoutException("the offset commits of " + pending + " in group " + group
            + " are still pending in an open transaction after " + timeout.toSeconds() + " s");
      }
      Thread.sleep(RETRY_MILLIS);
    }
  }

  /** {@link #committed(Admin, String, Collection, Duration)} with the 60-second wait of this module's admin calls. */
  static Map<TopicPartition, OffsetAndMetadata> committed(Admin admin, String group, Collection<TopicPartition> partitions)
      throws InterruptedException, ExecutionException, TimeoutException {
    return committed(admin, group, partitions, Duration.ofSeconds(60));
  }
}
