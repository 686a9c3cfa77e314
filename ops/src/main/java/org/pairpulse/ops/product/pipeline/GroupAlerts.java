package org.pairpulse.ops.product.pipeline;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.function.Supplier;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.ProducerFencedException;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ingest.kafka.CommittedKey;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.KafkaClientProperties;
import org.pairpulse.serve.alerts.AlertLeadership;
import org.pairpulse.serve.alerts.CloudEvents;
import org.pairpulse.serve.drift.AlertEvent;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The group's alert leadership on Kafka (group mode).
 *
 * <h2>Who leads</h2>
 * The instance that owns the designated partition (partition 0 of the first basket topic by name) under the consumer
 * group's assignment: Kafka's group coordinator decides, nothing is elected here. A rebalance that moves that
 * partition moves the leadership with it; with the cooperative assignor the old owner gives it up before the new one
 * gets it.
 *
 * <h2>Exactly once</h2>
 * Every leader publishes through a transactional producer with the same transactional id,
 * {@code pairpulse-<group.id>-alerts}. Each round's alert events (to the alerts topic, as CloudEvents) and the alert
 * state after them (to the compacted alert-state topic, key {@code <group.id>}) form one transaction. A new leader's
 * {@code initTransactions} fences the previous one (a crashed or paused instance can publish nothing more) and aborts
 * its open transaction; it then reads the state committed last ({@code read_committed}, through the instance's one
 * consumer, which follows the alert-state topic) and continues from it. So an
 * event that was committed is in the state the successor starts from (it is not raised again), and one that was not
 * is raised by the successor from its own tables (it is not lost). Alert ids are stable ({@link AlertEvent#id()}).
 * Readers of the alerts topic must read committed records ({@code isolation.level=read_committed}) to see each event
 * once; a webhook is told after the commit, so a leader killed between its commit and the call loses that call.
 */
final class GroupAlerts implements AlertLeadership {
  private static final Logger LOG = LoggerFactory.getLogger(GroupAlerts.class);

  private final Map<String, Object> producerProps;
  private final CommittedKey committedState;
  private final Supplier<java.util.Set<TopicPartition>> owned;
  private final TopicPartition designated;
  private final String alertTopic;
  private final String stateTopic;
  private final byte[] stateKey;
  private Producer<byte[], byte[]> producer; // watcher thread only
  private final io.micrometer.core.instrument.Counter delivered;
  private final io.micrometer.core.instrument.Counter failed;

  /**
   * @param ingest ingest's settings (for {@code bootstrap.servers} and the client pass-through)
   * @param owned the partitions this instance owns now
   * @param designated the partition whose owner leads
   * @param alertTopic the alerts topic; empty: events go to no topic (the state is published all the same)
   * @param stateTopic the compacted alert-state topic (one partition)
   * @param committedState the group's alert state ({@code stateTopic}, key {@code <group.id>}) as the instance's one
   *     consumer follows it ({@code read_committed}, see {@link org.pairpulse.ingest.kafka.Ingestor#followKey}): a
   *     take-over reads it to the end
   * @param registry where the deliveries to the alerts topic are counted ({@code pairpulse_alert_deliveries_total}
   *     with {@code sink="kafka"}, as the one-instance topic sink counts them)
   */
  GroupAlerts(IngestConfig ingest, String group, Supplier<java.util.Set<TopicPartition>> owned,
      TopicPartition designated, String alertTopic, String stateTopic, CommittedKey committedState,
      io.micrometer.core.instrument.MeterRegistry registry) {
    Map<String, Object> p = KafkaClientProperties.forClient(ingest, KafkaClientProperties.Kind.PRODUCER);
    p.put(ProducerConfig.CLIENT_ID_CONFIG, "pairpulse-alerts");
    p.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, "pairpulse-" + group + "-alerts");
    p.put(ProducerConfig.ACKS_CONFIG, "all");
    p.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, true);
    p.put(ProducerConfig.MAX_BLOCK_MS_CONFIG, 60_000);
    this.producerProps = p;
    this.committedState = committedState;
    this.owned = owned;
    this.designated = designated;
    this.alertTopic = alertTopic;
    this.stateTopic = stateTopic;
    this.stateKey = group.getBytes(StandardCharsets.UTF_8);
    this.delivered = deliveries(registry, "delivered");
    this.failed = deliveries(registry, "failed");
  }

  private static io.micrometer.core.instrument.Counter deliveries(io.micrometer.core.instrument.MeterRegistry registry,
      String outcome) {
    return io.micrometer.core.instrument.Counter.builder("pairpulse.alert.deliveries")
        .description("Alert events handed to a sink, by outcome").tag("sink", "kafka").tag("outcome", outcome)
        .register(registry);
  }

  /** The designated partition: partition 0 of the first topic by name. */
  static TopicPartition designated(List<String> topics) {
    return new TopicPartition(topics.stream().sorted().findFirst().orElseThrow(), 0);
  }

  @Override
  public boolean leading() {
    return owned.get().contains(designated);
  }

  @Override
  public Optional<byte[]> takeOver() {
    closeProducer();
    Producer<byte[], byte[]> fresh = new KafkaProducer<>(producerProps, new ByteArraySerializer(), new ByteArraySerializer());
    try {
      fresh.initTransactions(); // fences the previous leader and aborts its open publication
    } catch (RuntimeException e) {
      fresh.close(Duration.ZERO);
      throw e;
    }
    producer = fresh;
    return readState();
  }

  /** The alert state committed last: the poll loop has read the alert-state topic to its end as of now. */
  private Optional<byte[]> readState() {
    return committedState.readCommitted(Duration.ofSeconds(60));
  }

  @Override
  public boolean publish(List<AlertEvent> events, byte[] state) {
    if (producer == null) {
      return false;
    }
    try {
      producer.beginTransaction();
      if (!alertTopic.isEmpty()) {
        for (AlertEvent event : events) {
          ProducerRecord<byte[], byte[]> record = new ProducerRecord<>(alertTopic,
              CloudEvents.subject(event).getBytes(StandardCharsets.UTF_8), CloudEvents.json(event));
          record.headers().add("content-type", CloudEvents.CONTENT_TYPE.getBytes(StandardCharsets.UTF_8));
          producer.send(record);
        }
      }
      producer.send(new ProducerRecord<>(stateTopic, 0, stateKey, state));
      producer.commitTransaction();
      if (!alertTopic.isEmpty()) {
        delivered.increment(events.size());
      }
      return true;
    } catch (ProducerFencedException e) {
      LOG.info("another instance took over the group's alerts ({})", e.getMessage());
      closeProducer();
      return false;
    } catch (KafkaException e) {
      failed.increment(events.size());
      LOG.warn("alert publication of {} events failed ({}); the next leader round raises them again", events.size(),
          e.toString());
      closeProducer(); // aborts the open transaction; takeOver starts again from the committed state
      return false;
    }
  }

  private void closeProducer() {
    if (producer != null) {
      try {
        producer.close(Duration.ofSeconds(5));
      } catch (RuntimeException e) {
        LOG.debug("closing the alert producer: {}", e.toString());
      }
      producer = null;
    }
  }

  @Override
  public void close() {
    closeProducer();
  }
}
