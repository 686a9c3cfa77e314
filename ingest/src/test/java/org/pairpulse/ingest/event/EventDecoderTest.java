package org.pairpulse.ingest.event;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.ObjectMapper;
import io.cloudevents.CloudEvent;
import io.cloudevents.core.builder.CloudEventBuilder;
import io.cloudevents.core.message.Encoding;
import io.cloudevents.jackson.JsonFormat;
import io.cloudevents.kafka.CloudEventSerializer;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Base64;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.stream.Stream;
import org.apache.kafka.common.header.Headers;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.pairpulse.sketch.time.ManualClock;

class EventDecoderTest {
  static final long NOW = Instant.parse("2026-12-02T12:00:00Z").toEpochMilli();
  final EventDecoder decoder = new EventDecoder(limits());

  /** The test limits: 20 items, 64-char ids, 1 day ahead, 365 days back, 4 attributes. */
  static EventLimits limits() {
    return new EventLimits(20, 64, 86_400_000L, 365L * 86_400_000L, 4, new ManualClock(NOW));
  }

  BasketEvent json(String text) throws InvalidEventException {
    return decoder.decode(text.getBytes(StandardCharsets.UTF_8), new RecordHeaders());
  }

  @Test
  void plainBasketWithEveryOptionalPart() throws Exception {
    BasketEvent event = json(" { \"channel\" : {\"nested\": [1, -2.5e3, true, null, {\"x\": \"y\\u00e9\"}]},"
        + " \"id\":\"o-1\\\"7\", \"time\":\"2026-12-02T10:15:00.250+01:00\","
        + " \"items\":[\"sim-20gb\", {\"qty\": 2, \"id\":\"roaming-\\u00e9u\"}, \"caf\u00e9\", \"sim-20gb\"],"
        + " \"attributes\":{\"segment\":\"prepaid\"} }\n");
    Basket basket = assertInstanceOf(Basket.class, event);
    assertEquals("o-1\"7", basket.basketId());
    assertEquals(Instant.parse("2026-12-02T09:15:00.250Z").toEpochMilli(), basket.eventMillis());
    assertEquals(List.of("sim-20gb", "roaming-éu", "café", "sim-20gb"), basket.items());
    assertEquals(Map.of("segment", "prepaid"), basket.attributes());
  }

  @Test
  void epochMillisAndNullOptionals() throws Exception {
    Basket basket = (Basket) json("{\"id\":\"b\",\"time\":1796205600000,\"items\":[\"a\"],\"attributes\":null}");
    assertEquals(1796205600000L, basket.eventMillis());
    assertTrue(basket.attributes().isEmpty());
  }

  @Test
  void lineItemsAndEndMarkers() throws Exception {
    LineItem line = (LineItem) json("{\"basket\":\"o-9\",\"time\":1796205600000,\"item\":{\"id\":\"tv-pack\",\"qty\":1},\"qty\":3}");
    assertEquals(new LineItem("o-9", 1796205600000L, "tv-pack", false), line);
    LineItem end = (LineItem) json("{\"basket\":\"o-9\",\"time\":1796205600001,\"end\":true}");
    assertTrue(end.end());
    assertNull(end.item());
    LineItem both = (LineItem) json("{\"basket\":\"o-9\",\"time\":1796205600001,\"item\":\"x\",\"end\":true}");
    assertEquals("x", both.item());
    assertTrue(both.end());
  }

  static Stream<Arguments> poison() {
    String t = "1796205600000";
    return Stream.of(
        Arguments.of("", DeadLetterReason.MALFORMED),
        Arguments.of("not json", DeadLetterReason.MALFORMED),
        Arguments.of("[1,2]", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"]} trailing", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\",]}", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\" \"time\":1}", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"x\":[01]}", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"x\":\"\\q\"}", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"x\":tru}", DeadLetterReason.MALFORMED),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"x\":" + "[".repeat(100) + "]".repeat(100) + "}",
            DeadLetterReason.MALFORMED),
        Arguments.of("{\"time\":" + t + ",\"items\":[\"a\"]}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":null,\"time\":" + t + ",\"items\":[\"a\"]}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":\"a\",\"items\":[\"a\"]}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + "}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":\"\",\"time\":" + t + ",\"items\":[\"a\"]}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[{\"qty\":1}]}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"basket\":\"a\",\"time\":" + t + "}", DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"id\":7,\"time\":" + t + ",\"items\":[\"a\"]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":true,\"items\":[\"a\"]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":1.5,\"items\":[\"a\"]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":\"yesterday\",\"items\":[\"a\"]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":99999999999999999999,\"items\":[\"a\"]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":\"a\"}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[1]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[{\"id\":\"x\",\"qty\":0}]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[{\"id\":\"x\",\"qty\":\"2\"}]}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"attributes\":{\"s\":1}}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"a\"],\"attributes\":{\"a\":\"1\",\"b\":\"2\",\"c\":\"3\","
            + "\"d\":\"4\",\"e\":\"5\"}}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"basket\":\"a\",\"time\":" + t + ",\"item\":\"x\",\"end\":\"yes\"}", DeadLetterReason.WRONG_TYPE),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[]}", DeadLetterReason.EMPTY_BASKET),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[" + "\"x\",".repeat(20) + "\"y\"]}", DeadLetterReason.OVERSIZED_BASKET),
        Arguments.of("{\"id\":\"" + "a".repeat(65) + "\",\"time\":" + t + ",\"items\":[\"a\"]}", DeadLetterReason.ID_TOO_LONG),
        Arguments.of("{\"id\":\"a\",\"time\":" + t + ",\"items\":[\"" + "x".repeat(65) + "\"]}", DeadLetterReason.ID_TOO_LONG),
        Arguments.of("{\"id\":\"a\",\"time\":" + (NOW + 2 * 86_400_000L) + ",\"items\":[\"a\"]}", DeadLetterReason.TIME_IN_FUTURE),
        Arguments.of("{\"id\":\"a\",\"time\":\"2020-01-01T00:00:00Z\",\"items\":[\"a\"]}", DeadLetterReason.TIME_TOO_OLD),
        Arguments.of("{\"specversion\":\"0.3\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data\":{}}",
            DeadLetterReason.UNSUPPORTED_EVENT),
        Arguments.of("{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"com.example.refund\",\"data\":{}}",
            DeadLetterReason.UNSUPPORTED_EVENT),
        Arguments.of("{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\","
            + "\"datacontenttype\":\"text/csv\",\"data\":{}}", DeadLetterReason.UNSUPPORTED_EVENT),
        Arguments.of("{\"specversion\":\"1.0\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data\":{}}",
            DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\"}",
            DeadLetterReason.MISSING_FIELD),
        Arguments.of("{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data\":\"x\"}",
            DeadLetterReason.WRONG_TYPE));
  }

  @ParameterizedTest
  @MethodSource("poison")
  void everyBadRecordHasItsReason(String text, DeadLetterReason reason) {
    InvalidEventException e = assertThrows(InvalidEventException.class, () -> json(text), text);
    assertEquals(reason, e.reason(), e.detail());
    assertFalse(e.detail().isBlank());
  }

  @Test
  void invalidUtf8AndControlCharactersAreMalformed() {
    byte[] bad = "{\"id\":\"ab\",\"time\":1796205600000,\"items\":[\"a\"]}".getBytes(StandardCharsets.UTF_8);
    bad[8] = (byte) 0xC3; // a lead byte followed by 'b' (not a continuation byte)
    assertEquals(DeadLetterReason.MALFORMED, assertThrows(InvalidEventException.class,
        () -> decoder.decode(bad, new RecordHeaders())).reason());
    assertEquals(DeadLetterReason.MALFORMED, assertThrows(InvalidEventException.class,
        () -> json("{\"id\":\"a\tb\",\"time\":1796205600000,\"items\":[\"a\"]}")).reason());
    assertEquals(DeadLetterReason.MALFORMED, assertThrows(InvalidEventException.class,
        () -> decoder.decode(null, new RecordHeaders())).reason());
  }

  /**
   * A record that is no UTF-8 (RFC 3629: overlong forms, encoded surrogates, code points past U+10FFFF, stray or
   * missing continuation bytes) is malformed wherever the bad bytes sit, even in a value the contract ignores.
   */
  @Test
  void recordsThatAreNoUtf8AreMalformedWhereverTheBytesSit() {
    List<byte[]> records = EventCorpus.notUtf8();
    assertEquals(40, records.size());
    for (byte[] record : records) {
      assertEquals(DeadLetterReason.MALFORMED, assertThrows(InvalidEventException.class,
          () -> decoder.decode(record, new RecordHeaders())).reason(), new String(record, StandardCharsets.ISO_8859_1));
    }
  }

  @Test
  void structuredCloudEventWithOrWithoutHeaderAndWithBase64Data() throws Exception {
    String data = "{\"id\":\"o-5\",\"items\":[\"a\",\"b\"]}";
    String envelope = "{\"specversion\":\"1.0\",\"id\":\"ev-1\",\"source\":\"/shop\",\"type\":\"org.pairpulse.basket.v1\","
        + "\"time\":\"2026-12-02T11:00:00Z\",\"datacontenttype\":\"application/json\",\"data\":" + data + "}";
    RecordHeaders headers = new RecordHeaders();
    headers.add("content-type", "application/cloudevents+json; charset=UTF-8".getBytes(StandardCharsets.UTF_8));
    Basket expected = new Basket("o-5", Instant.parse("2026-12-02T11:00:00Z").toEpochMilli(), List.of("a", "b"), Map.of());
    assertEquals(expected, decoder.decode(envelope.getBytes(StandardCharsets.UTF_8), headers));
    assertEquals(expected, json(envelope), "recognised by its specversion key without the header");
    String base64 = "{\"specversion\":\"1.0\",\"id\":\"ev-1\",\"source\":\"/shop\",\"type\":\"org.pairpulse.basket.v1\","
        + "\"time\":\"2026-12-02T11:00:00Z\",\"data_base64\":\""
        + Base64.getEncoder().encodeToString(data.getBytes(StandardCharsets.UTF_8)) + "\"}";
    assertEquals(expected, json(base64));
  }

  /** Interoperability: records written by the CloudEvents SDK (io.cloudevents:cloudevents-kafka 4.0.1). */
  @Test
  void readsWhatTheCloudEventsSdkWritesInBothModes() throws Exception {
    byte[] data = "{\"basket\":\"o-7\",\"item\":\"sim-20gb\",\"qty\":1}".getBytes(StandardCharsets.UTF_8);
    CloudEvent event = CloudEventBuilder.v1().withId("ev-9").withSource(URI.create("/shop/eu"))
        .withType(EventDecoder.LINE_ITEM_TYPE).withTime(OffsetDateTime.of(2026, 12, 2, 11, 30, 0, 0, ZoneOffset.ofHours(2)))
        .withDataContentType("application/json").withData(data).build();
    LineItem expected = new LineItem("o-7", Instant.parse("2026-12-02T09:30:00Z").toEpochMilli(), "sim-20gb", false);
    for (Encoding encoding : List.of(Encoding.BINARY, Encoding.STRUCTURED)) {
      try (CloudEventSerializer serializer = new CloudEventSerializer()) {
        Map<String, Object> config = new LinkedHashMap<>();
        config.put(CloudEventSerializer.ENCODING_CONFIG, encoding);
        config.put(CloudEventSerializer.EVENT_FORMAT_CONFIG, JsonFormat.CONTENT_TYPE);
        serializer.configure(config, false);
        Headers headers = new RecordHeaders();
        byte[] value = serializer.serialize("baskets", headers, event);
        assertEquals(expected, decoder.decode(value, headers), "encoding " + encoding);
      }
    }
  }

  @Test
  void binaryModeNeedsItsRequiredHeadersAndAJsonContentType() {
    RecordHeaders headers = new RecordHeaders();
    headers.add("ce_specversion", "1.0".getBytes(StandardCharsets.UTF_8));
    headers.add("ce_id", "e".getBytes(StandardCharsets.UTF_8));
    headers.add("ce_type", EventDecoder.BASKET_TYPE.getBytes(StandardCharsets.UTF_8));
    byte[] value = "{\"id\":\"a\",\"time\":1796205600000,\"items\":[\"x\"]}".getBytes(StandardCharsets.UTF_8);
    assertEquals(DeadLetterReason.MISSING_FIELD, assertThrows(InvalidEventException.class, () -> decoder.decode(value, headers)).reason());
    headers.add("ce_source", "/s".getBytes(StandardCharsets.UTF_8));
    headers.add("content-type", "application/xml".getBytes(StandardCharsets.UTF_8));
    assertEquals(DeadLetterReason.UNSUPPORTED_EVENT, assertThrows(InvalidEventException.class, () -> decoder.decode(value, headers)).reason());
  }

  /** The decoder against Jackson (a general JSON library) as the oracle, on seeded random baskets. */
  @Test
  void agreesWithJacksonOnRandomBaskets() throws Exception {
    ObjectMapper mapper = new ObjectMapper();
    Random random = new Random(42);
    for (int n = 0; n < 2000; n++) {
      Map<String, Object> basket = new LinkedHashMap<>();
      List<Object> items = new ArrayList<>();
      List<String> ids = new ArrayList<>();
      int size = 1 + random.nextInt(8);
      for (int k = 0; k < size; k++) {
        String id = EventCorpus.randomId(random);
        ids.add(id);
        items.add(random.nextBoolean() ? id : Map.of("id", id, "qty", 1 + random.nextInt(5)));
      }
      if (random.nextBoolean()) {
        basket.put("extra", Map.of("list", List.of(1, "two", 3.5), "flag", false));
      }
      basket.put("id", EventCorpus.randomId(random));
      basket.put("time", NOW - random.nextInt(1_000_000));
      basket.put("items", items);
      Basket decoded = (Basket) decoder.decode(mapper.writeValueAsBytes(basket), new RecordHeaders());
      assertEquals(basket.get("id"), decoded.basketId());
      assertEquals(((Number) basket.get("time")).longValue(), decoded.eventMillis());
      assertEquals(ids, decoded.items());
    }
  }

  /** No input, however broken, makes the decoder throw anything but InvalidEventException. */
  @Test
  void mutatedRecordsNeverEscapeAsOtherExceptions() {
    Random random = new Random(7);
    int rejected = 0;
    for (int n = 0; n < 30_000; n++) {
      byte[] bytes = EventCorpus.mutate(EventCorpus.MUTATION_SEEDS.get(n % EventCorpus.MUTATION_SEEDS.size()), random);
      try {
        decoder.decode(bytes, new RecordHeaders());
      } catch (InvalidEventException e) {
        rejected++;
      } catch (RuntimeException e) {
        fail("decoder threw " + e + " for " + new String(bytes, StandardCharsets.UTF_8), e);
      }
    }
    assertTrue(rejected > 20_000, "most mutations must be rejected, got " + rejected);
  }
}
