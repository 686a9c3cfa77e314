package org.pairpulse.ops.tools.group;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;

/**
 * The alerts a topic holds, as a reader that sees committed records only ({@code read_committed}) reads them: each
 * event's id and what it says (segment, type, subject), in topic order.
 *
 * @param ids every event's id, in order
 * @param timeline every event's segment, type and subject (for instance
 *     {@code all org.pairpulse.alert.emerging.raised pairs/a/b}), in order
 */
public record AlertTimeline(List<String> ids, List<String> timeline) {
  private static final ObjectMapper JSON = new ObjectMapper();

  /**
   * The timeline per alert track (segment, kind, pair): its transitions in order, for instance
   * {@code all emerging pairs/a/b -> [raised, resolved]}. Two runs that observe tables at other moments may interleave
   * different tracks' events differently; each track's own course is what must agree.
   */
  public java.util.SortedMap<String, List<String>> byTrack() {
    java.util.SortedMap<String, List<String>> out = new java.util.TreeMap<>();
    for (String event : timeline) {
      String[] parts = event.split(" ", 3);
      String[] type = (parts.length > 1 ? parts[1] : "").split("\\.");
      String kind = type.length > 1 ? type[type.length - 2] : "";
      String transition = type[type.length - 1];
      out.computeIfAbsent(parts[0] + " " + kind + " " + (parts.length > 2 ? parts[2] : ""), k -> new ArrayList<>())
          .add(transition);
    }
    return out;
  }

  /** True when no id occurs twice. */
  public boolean idsUnique() {
    Set<String> seen = new HashSet<>();
    return ids.stream().allMatch(seen::add);
  }

  /** Reads the whole (one-partition) topic up to its end. */
  public static AlertTimeline read(String bootstrapServers, String topic) {
    Map<String, Object> props = new HashMap<>();
    props.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers);
    props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
    props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    List<String> ids = new ArrayList<>();
    List<String> timeline = new ArrayList<>();
    TopicPartition tp = new TopicPartition(topic, 0);
    try (KafkaConsumer<byte[], byte[]> reader = new KafkaConsumer<>(props, new ByteArrayDeserializer(),
        new ByteArrayDeserializer())) {
      reader.assign(List.of(tp));
      reader.seekToBeginning(List.of(tp));
      long end = reader.endOffsets(List.of(tp), Duration.ofSeconds(30)).get(tp);
      long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
      while (reader.position(tp) < end && System.nanoTime() < deadline) {
        for (ConsumerRecord<byte[], byte[]> r : reader.poll(Duration.ofMillis(200))) {
          JsonNode event = JSON.readTree(r.value());
          ids.add(event.path("id").asText());
          timeline.add(event.path("segment").asText() + " " + event.path("type").asText() + " "
              + event.path("subject").asText());
        }
      }
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    return new AlertTimeline(List.copyOf(ids), List.copyOf(timeline));
  }
}
