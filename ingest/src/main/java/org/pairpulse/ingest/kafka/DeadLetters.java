package org.pairpulse.ingest.kafka;

import java.nio.charset.StandardCharsets;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Sends records that cannot be used to the dead-letter topic: the original key, value, timestamp and
 * headers, plus the headers below. In group mode the send joins the open transaction, so a dead letter
 * is published exactly once, together with the offsets that move past its record.
 *
 * <table>
 *   <caption>Headers added (UTF-8 text)</caption>
 *   <tr><td>{@value #REASON}</td><td>the reason's wire name, e.g. {@code malformed}</td></tr>
 *   <tr><td>{@value #DETAIL}</td><td>a short human description</td></tr>
 *   <tr><td>{@value #SOURCE_TOPIC}, {@value #SOURCE_PARTITION}, {@value #SOURCE_OFFSET}</td><td>where the record was read</td></tr>
 * </table>
 */
final class DeadLetters {
  private static final Logger LOG = LoggerFactory.getLogger(DeadLetters.class);

  static final String REASON = "pairpulse.dead-letter.reason";
  static final String DETAIL = "pairpulse.dead-letter.detail";
  static final String SOURCE_TOPIC = "pairpulse.dead-letter.topic";
  static final String SOURCE_PARTITION = "pairpulse.dead-letter.partition";
  static final String SOURCE_OFFSET = "pairpulse.dead-letter.offset";
  private static final int MAX_DETAIL_CHARS = 512;

  private final Producer<byte[], byte[]> producer;
  private final String topic;
  private final IngestMetrics metrics;

  DeadLetters(Producer<byte[], byte[]> producer, String topic, IngestMetrics metrics) {
    this.producer = producer;
    this.topic = topic;
    this.metrics = metrics;
  }

  void send(ConsumerRecord<byte[], byte[]> record, DeadLetterReason reason, String detail) {
    metrics.deadLetter(reason);
    RecordHeaders headers = new RecordHeaders(record.headers().toArray());
    headers.add(REASON, utf8(reason.wireName()));
    String shown = detail == null ? "" : detail.length() > MAX_DETAIL_CHARS ? detail.substring(0, MAX_DETAIL_CHARS) : detail;
    headers.add(DETAIL, utf8(shown));
    headers.add(SOURCE_TOPIC, utf8(record.topic()));
    headers.add(SOURCE_PARTITION, utf8(Integer.toString(record.partition())));
    headers.add(SOURCE_OFFSET, utf8(Long.toString(record.offset())));
    long timestamp = record.timestamp() >= 0 ? record.timestamp() : System.currentTimeMillis();
    producer.send(new ProducerRecord<>(topic, null, timestamp, record.key(), record.value(), headers), (meta, error) -> {
      if (error != null) {
        LOG.warn("dead letter from {}-{}@{} not written: {}", record.topic(), record.partition(), record.offset(), error.toString());
      }
    });
  }

  private static byte[] utf8(String s) {
    return s.getBytes(StandardCharsets.UTF_8);
  }
}
