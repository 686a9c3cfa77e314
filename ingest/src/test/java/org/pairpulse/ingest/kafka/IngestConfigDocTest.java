package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.common.config.ConfigException;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.junit.jupiter.api.Test;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.sketch.time.ManualClock;

/** The README section stays true: every key and reason listed, every JSON example decodes; the config validates. */
class IngestConfigDocTest {
  static final Path README = Path.of("README-ingest.md");

  @Test
  void readmeListsEveryKeyWithItsDefaultAndEveryReason() throws Exception {
    String readme = Files.readString(README);
    IngestConfig.DEFINITION.configKeys().forEach((name, key) -> {
      assertTrue(readme.contains("| `" + name + "` |"), "README-ingest.md lacks the key " + name);
      boolean empty = key.defaultValue == null || key.defaultValue.toString().isEmpty()
          || key.defaultValue instanceof java.util.List<?> list && list.isEmpty();
      if (key.hasDefault() && !empty) {
        assertTrue(readme.contains("| `" + name + "` | `" + key.defaultValue + "`"),
            "README-ingest.md gives another default for " + name + " (expected " + key.defaultValue + ")");
      }
    });
    for (DeadLetterReason reason : DeadLetterReason.values()) {
      assertTrue(readme.contains("| `" + reason.wireName() + "` |"), "README-ingest.md lacks the reason " + reason.wireName());
    }
  }

  @Test
  void everyJsonExampleOfTheReadmeDecodes() throws Exception {
    String readme = Files.readString(README);
    Matcher blocks = Pattern.compile("```json\\n(.*?)\\n```", Pattern.DOTALL).matcher(readme);
    EventDecoder decoder = new EventDecoder(EventLimits.defaults(new ManualClock(Instant.parse("2026-12-02T12:00:00Z").toEpochMilli())));
    List<BasketEvent> events = new ArrayList<>();
    while (blocks.find()) {
      events.add(decoder.decode(blocks.group(1).getBytes(StandardCharsets.UTF_8), new RecordHeaders()));
    }
    assertEquals(6, events.size(), "examples found in README-ingest.md");
    assertInstanceOf(org.pairpulse.ingest.event.Basket.class, events.get(5), "the structured CloudEvent example is a basket");
  }

  @Test
  void configurationIsValidated() {
    assertThrows(ConfigException.class, () -> new IngestConfig(Map.of("topics", "t")), "bootstrap.servers is required");
    assertThrows(ConfigException.class, () -> new IngestConfig(Map.of("bootstrap.servers", "h:1", "topics", "t",
        "checkpoint.store", "disk")));
    assertThrows(ConfigException.class, () -> new IngestConfig(Map.of("bootstrap.servers", "h:1", "topics", "t",
        "checkpoint.interval.ms", "90000")), "an interval longer than the transaction timeout");
    IngestConfig config = new IngestConfig(Map.of("bootstrap.servers", "h:1", "topics", "t",
        "kafka.security.protocol", "SASL_SSL", "kafka.consumer.max.poll.records", "10", "kafka.producer.linger.ms", "1"));
    assertEquals(Map.of("security.protocol", "SASL_SSL", "max.poll.records", "10"), config.clientOverrides("consumer"));
    assertEquals(Map.of("security.protocol", "SASL_SSL", "linger.ms", "1"), config.clientOverrides("producer"));
    assertEquals(Map.of("security.protocol", "SASL_SSL"), config.clientOverrides("admin"));
  }
}
