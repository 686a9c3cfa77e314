package org.pairpulse.ingest.kafka;

import java.util.List;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.event.LineItem;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.metrics.IngestMetrics;
import org.pairpulse.ingest.worker.BasketBatch;

/**
 * Where each polled record goes: decoded ({@link EventDecoder}) and passed through its partition's front into a
 * basket sink, or, when it cannot be used, to the dead-letter topic with its reason (undecodable, late, oversized
 * basket); a re-delivered basket is counted as a duplicate and dropped. Poll thread only.
 */
record RecordRouter(EventDecoder decoder, DeadLetters deadLetters, IngestMetrics metrics) {
  /**
   * Routes {@code records} of one partition, in order, through {@code front} into {@code batch} (with attributes)
   * and then {@code tap} (without; null: none).
   */
  void route(List<ConsumerRecord<byte[], byte[]>> records, PartitionFront front, BasketBatch batch, BasketSink tap) {
    BasketSink into = tap == null ? batch : tee(batch, tap);
    for (ConsumerRecord<byte[], byte[]> record : records) {
      BasketEvent event;
      try {
        event = decoder.decode(record.value(), record.headers());
      } catch (InvalidEventException e) {
        deadLetters.send(record, e.reason(), e.detail());
        continue;
      }
      switch (front.accept(event, into)) {
        case ACCEPTED:
          break;
        case DUPLICATE:
          metrics.duplicate(event instanceof LineItem);
          break;
        case LATE:
          deadLetters.send(record, DeadLetterReason.LATE, "event time " + event.eventMillis()
              + " is before the partition watermark " + front.watermarkMillis());
          break;
        case OVERSIZED:
          deadLetters.send(record, DeadLetterReason.OVERSIZED_BASKET, "basket '" + event.basketId()
              + "' would exceed max.basket.items");
          break;
        default:
          throw new IllegalStateException("unknown outcome");
      }
    }
  }

  /** {@code batch} first, then {@code also}, with the basket's attributes for the batch. */
  private static BasketSink tee(BasketBatch batch, BasketSink also) {
    return BasketSink.withAttributes((id, time, items, attributes) -> {
      batch.basket(id, time, items, attributes);
      also.basket(id, time, items);
    });
  }
}
