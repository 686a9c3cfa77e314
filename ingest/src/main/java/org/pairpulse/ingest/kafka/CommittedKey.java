package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.consumer.Consumer;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;

/**
 * The newest committed value of one key of a compacted topic that the instance's one consumer follows (group mode;
 * see {@link Ingestor#followKey}): the poll loop reads the topic ({@code read_committed}, every partition, from its
 * beginning) beside the basket topics, and keeps the key's newest value. ops' alert take-over reads the group's alert
 * state this way.
 *
 * <p>Threading: {@link #readCommitted} from any thread; the rest on the poll thread, except {@link #close()}, which
 * fails what waits (any thread, after the poll loop has stopped).
 */
public final class CommittedKey {
  private final String topic;
  private final byte[] key;
  private volatile byte[] value;
  private volatile boolean closed;
  private final ConcurrentLinkedQueue<CompletableFuture<Optional<byte[]>>> asked = new ConcurrentLinkedQueue<>();
  /** Reads waiting for the poll loop to reach the end offsets they were given (poll thread only). */
  private final List<Wait> waiting = new ArrayList<>();

  private record Wait(CompletableFuture<Optional<byte[]>> answer, Map<TopicPartition, Long> ends) {}

  CommittedKey(String topic, byte[] key) {
    this.topic = topic;
    this.key = key.clone();
  }

  String topic() {
    return topic;
  }

  /**
   * The key's value as committed when this is called: waits until the poll loop has read the topic up to its
   * {@code read_committed} end offsets of now (so a transaction committed, or aborted by fencing, before the call is
   * seen), then answers its newest value; empty when the key has none (or was deleted).
   *
   * @throws KafkaException when the loop does not get there within {@code timeout} or the topic is not read here
   */
  public Optional<byte[]> readCommitted(Duration timeout) {
    CompletableFuture<Optional<byte[]>> answer = new CompletableFuture<>();
    asked.add(answer);
    if (closed) {
      close();
    }
    try {
      return answer.get(timeout.toMillis(), TimeUnit.MILLISECONDS);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new KafkaException("interrupted while reading " + topic, e);
    } catch (ExecutionException e) {
      throw new KafkaException("cannot read " + topic + ": " + e.getCause().getMessage(), e.getCause());
    } catch (TimeoutException e) {
      answer.cancel(false);
      throw new KafkaException("timed out reading " + topic + " to its end after " + timeout.toMillis() + " ms");
    }
  }

  /** A record of the topic, in offset order per partition (poll thread). */
  void accept(ConsumerRecord<byte[], byte[]> record) {
    if (Arrays.equals(record.key(), key)) {
      value = record.value();
    }
  }

  /** Starts the reads asked since the last poll and answers those the loop has read far enough for (poll thread). */
  void afterPoll(Consumer<byte[], byte[]> consumer) {
    CompletableFuture<Optional<byte[]>> next;
    while ((next = asked.poll()) != null) {
      List<TopicPartition> partitions = consumer.assignment().stream().filter(tp -> tp.topic().equals(topic)).toList();
      if (partitions.isEmpty()) {
        next.completeExceptionally(new KafkaException("no partition of " + topic + " is assigned (does the topic exist?)"));
        continue;
      }
      try {
        waiting.add(new Wait(next, consumer.endOffsets(partitions, Duration.ofSeconds(30))));
      } catch (KafkaException e) {
        next.completeExceptionally(e);
      }
    }
    for (Iterator<Wait> it = waiting.iterator(); it.hasNext(); ) {
      Wait wait = it.next();
      if (wait.answer().isDone()) {
        it.remove();
      } else if (reached(consumer, wait.ends())) {
        it.remove();
        byte[] newest = value;
        wait.answer().complete(Optional.ofNullable(newest == null ? null : newest.clone()));
      }
    }
  }

  /** The instance stops: every read asked and to come fails (any thread). */
  void close() {
    closed = true;
    KafkaException stopped = new KafkaException("the ingest instance that follows " + topic + " has stopped");
    CompletableFuture<Optional<byte[]>> next;
    while ((next = asked.poll()) != null) {
      next.completeExceptionally(stopped);
    }
    new ArrayList<>(waiting).forEach(w -> w.answer().completeExceptionally(stopped));
  }

  private static boolean reached(Consumer<byte[], byte[]> consumer, Map<TopicPartition, Long> ends) {
    Set<TopicPartition> assigned = consumer.assignment();
    for (Map.Entry<TopicPartition, Long> e : ends.entrySet()) {
      if (!assigned.contains(e.getKey()) || StateTap.position(consumer, e.getKey()) < e.getValue()) {
        return false;
      }
    }
    return true;
  }
}
