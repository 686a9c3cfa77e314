package org.pairpulse.ops.tools.group;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Random;
import java.util.Set;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * An invented basket stream for the group checks (the multi-instance test and {@code bench group}): {@code items}
 * items with skewed popularity, 2 to 5 per basket, evenly spread over {@code days} of event time ending at
 * {@code endMillis}; in the last {@code changeHours} one pair ({@link #EMERGING_A}, {@link #EMERGING_B}) is bought
 * together in a fifth of the baskets, so drift detection has an emerging pair to alert on. Records are keyed by
 * basket id (the ingest contract), so Kafka spreads them over the partitions. Seeded: the same arguments give the
 * same records.
 */
public final class GroupWorkload {
  public static final String EMERGING_A = "promo-kit";
  public static final String EMERGING_B = "gift-wrap";

  private final List<byte[]> keys = new ArrayList<>();
  private final List<byte[]> values = new ArrayList<>();
  private final List<Long> times = new ArrayList<>();

  public GroupWorkload(long seed, int baskets, int items, int days, int changeHours, long endMillis) {
    Random random = new Random(seed);
    long span = Duration.ofDays(days).toMillis();
    long changeFrom = endMillis - Duration.ofHours(changeHours).toMillis();
    for (int i = 0; i < baskets; i++) {
      long time = endMillis - span + (span * i) / baskets;
      Set<String> basket = new LinkedHashSet<>();
      int size = 2 + random.nextInt(4);
      while (basket.size() < size) {
        double u = random.nextDouble();
        basket.add(String.format(Locale.ROOT, "item-%03d", (int) (items * u * u))); // skewed toward low numbers
      }
      if (time >= changeFrom && random.nextDouble() < 0.2) {
        basket.add(EMERGING_A);
        basket.add(EMERGING_B);
      } else if (random.nextDouble() < 0.01) {
        basket.add(random.nextBoolean() ? EMERGING_A : EMERGING_B);
      }
      String id = "b-" + seed + "-" + i;
      StringBuilder json = new StringBuilder("{\"id\":\"").append(id).append("\",\"time\":").append(time)
          .append(",\"items\":[");
      int n = 0;
      for (String item : basket) {
        json.append(n++ == 0 ? "" : ",").append('"').append(item).append('"');
      }
      json.append("]}");
      keys.add(id.getBytes(StandardCharsets.UTF_8));
      values.add(json.toString().getBytes(StandardCharsets.UTF_8));
      times.add(time);
    }
  }

  public int size() {
    return values.size();
  }

  /** The event time of record {@code i}. */
  public long timeAt(int i) {
    return times.get(i);
  }

  /** Sends records {@code from} (inclusive) to {@code to} (exclusive) and flushes. */
  public void produce(Producer<byte[], byte[]> producer, String topic, int from, int to) {
    for (int i = from; i < to; i++) {
      producer.send(new ProducerRecord<>(topic, keys.get(i), values.get(i)));
    }
    producer.flush();
  }
}
