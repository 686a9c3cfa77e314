package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.ListOffsetsOptions;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.common.TopicPartition;

/**
 * Waits until a topic's partitions accept writes.
 *
 * <p>A broker publishes a new topic in its metadata cache before its replica manager has made itself the
 * partitions' leader, so for a moment {@code describeTopics} shows a leader while a produce request still
 * gets {@code NOT_LEADER_OR_FOLLOWER}. An idempotent producer with several requests in flight can lose
 * that race for good (KAFKA-15591, KAFKA-14359): the first batch of a partition fails, a later batch is
 * accepted as the producer's first, and every retry of the first batch then fails with
 * {@code OUT_OF_ORDER_SEQUENCE_NUMBER} until {@code delivery.timeout.ms} expires it; a transactional
 * producer stops on it. Waiting until every partition answers a {@code ListOffsets} request on its leader
 * (which goes through the same leadership check as a produce request) closes that window.
 */
public final class Topics {
  private Topics() {}

  /**
   * Returns once every partition of {@code topics} has a leader that serves requests; throws
   * {@link java.util.concurrent.TimeoutException} after {@code timeout}, saying what was still missing.
   */
  public static void awaitWritable(Admin admin, Collection<String> topics, Duration timeout)
      throws InterruptedException, java.util.concurrent.TimeoutException {
    long deadline = System.nanoTime() + timeout.toNanos();
    String last = "nothing asked yet";
    while (true) {
      long remainingMs = Math.max(1, TimeUnit.NANOSECONDS.toMillis(deadline - System.nanoTime()));
      int callMs = (int) Math.min(remainingMs, 10_000);
      try {
        Map<String, TopicDescription> described = admin.describeTopics(List.copyOf(topics)).allTopicNames()
            .get(callMs, TimeUnit.MILLISECONDS);
        Map<TopicPartition, OffsetSpec> latest = new HashMap<>();
        String leaderless = null;
        for (TopicDescription d : described.values()) {
          for (var p : d.partitions()) {
            if (p.leader() == null || p.leader().isEmpty()) {
              leaderless = d.name() + "-" + p.partition();
            }
            latest.put(new TopicPartition(d.name(), p.partition()), OffsetSpec.latest());
          }
        }
        if (leaderless == null) {
          // answered by each partition's leader only once it acts as the leader
          admin.listOffsets(latest, new ListOffsetsOptions().timeoutMs(callMs)).all().get(callMs, TimeUnit.MILLISECONDS);
          return;
        }
        last = "no leader for " + leaderless;
      } catch (ExecutionException e) {
        last = String.valueOf(e.getCause());
      } catch (java.util.concurrent.TimeoutException e) {
        last = "no answer within " + callMs + " ms";
      }
      if (System.nanoTime() > deadline) {
        throw new java.util.concurrent.TimeoutException("the partitions of " + topics + " did not accept requests within "
            + timeout.toSeconds() + " s; last: " + last);
      }
      Thread.sleep(50); // back-off between two readiness probes
    }
  }
}
