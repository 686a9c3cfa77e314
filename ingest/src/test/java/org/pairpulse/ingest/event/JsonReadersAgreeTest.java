package org.pairpulse.ingest.event;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.util.EnumMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.Supplier;
import org.apache.kafka.common.header.Headers;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.junit.jupiter.api.Test;

/**
 * The two JSON readers side by side: the hand-written {@code JsonEventReader} is the oracle of the Jackson-based
 * {@code JacksonEventReader} on every record of {@link EventCorpus}, each sent as a plain record, as a structured
 * CloudEvent (by header) and as the data of a binary-mode CloudEvent of either type. Both must return equal events or
 * the same dead-letter reason. One deliberate difference: a record that is no UTF-8 is {@code malformed} for the Jackson
 * reader whatever else is wrong with it, where the hand-written reader checks UTF-8 only in the strings it reads.
 */
class JsonReadersAgreeTest {
  private final EventDecoder handWritten = new EventDecoder(EventDecoderTest.limits(), EventDecoder.JsonReader.HAND_WRITTEN);
  private final EventDecoder jackson = new EventDecoder(EventDecoderTest.limits(), EventDecoder.JsonReader.JACKSON);

  /** What a decoder made of a record: an event, or a reason (the detail text may differ). */
  record Outcome(BasketEvent event, DeadLetterReason reason) {
    static Outcome of(EventDecoder decoder, byte[] value, Headers headers) {
      try {
        return new Outcome(decoder.decode(value, headers), null);
      } catch (InvalidEventException e) {
        return new Outcome(null, e.reason());
      }
    }
  }

  @Test
  void validEventsOfEveryShape() {
    Map<DeadLetterReason, Integer> reasons = compare(CorpusOutcomesTest.utf8(EventCorpus.valid(3000, 11)));
    assertTrue(reasons.get(null) > 3000, "the valid corpus decodes: " + reasons);
  }

  @Test
  void poisonAndEdgeRecords() {
    List<byte[]> records = CorpusOutcomesTest.utf8(EventCorpus.poison());
    records.addAll(CorpusOutcomesTest.utf8(EventCorpus.edges()));
    Map<DeadLetterReason, Integer> reasons = compare(records);
    for (DeadLetterReason reason : List.of(DeadLetterReason.MALFORMED, DeadLetterReason.MISSING_FIELD,
        DeadLetterReason.WRONG_TYPE, DeadLetterReason.EMPTY_BASKET, DeadLetterReason.OVERSIZED_BASKET,
        DeadLetterReason.ID_TOO_LONG, DeadLetterReason.TIME_IN_FUTURE, DeadLetterReason.TIME_TOO_OLD,
        DeadLetterReason.UNSUPPORTED_EVENT)) {
      assertTrue(reasons.getOrDefault(reason, 0) > 0, "the corpus reaches " + reason + ": " + reasons);
    }
  }

  @Test
  void mutatedRecords() {
    List<byte[]> records = CorpusOutcomesTest.groups().get("mutated");
    Map<DeadLetterReason, Integer> reasons = compare(records);
    assertTrue(reasons.getOrDefault(null, 0) > 1000 && reasons.get(DeadLetterReason.MALFORMED) > 10_000,
        "mutations keep some records valid and break most: " + reasons);
  }

  @Test
  void recordsThatAreNoUtf8AreMalformedForJackson() {
    for (byte[] record : EventCorpus.notUtf8()) {
      assertEquals(DeadLetterReason.MALFORMED, Outcome.of(jackson, record, new RecordHeaders()).reason(),
          new String(record, StandardCharsets.ISO_8859_1));
    }
  }

  /** Both decoders on each record in each encoding; returns how often each reason came up (null: decoded). */
  private Map<DeadLetterReason, Integer> compare(List<byte[]> records) {
    Map<DeadLetterReason, Integer> reasons = new EnumMap<>(DeadLetterReason.class);
    int decoded = 0;
    for (byte[] record : records) {
      boolean utf8 = CorpusOutcomesTest.isUtf8(record);
      for (Headers headers : encodings()) {
        Outcome expected = Outcome.of(handWritten, record, headers);
        Outcome actual = Outcome.of(jackson, record, headers);
        Supplier<String> where = () -> new String(record, StandardCharsets.UTF_8) + " with headers " + headers;
        if (utf8) {
          assertEquals(expected, actual, where);
        } else {
          assertEquals(DeadLetterReason.MALFORMED, actual.reason(), where);
        }
        if (actual.reason() == null) {
          decoded++;
        } else {
          reasons.merge(actual.reason(), 1, Integer::sum);
        }
      }
    }
    Map<DeadLetterReason, Integer> out = new java.util.HashMap<>(reasons);
    out.put(null, decoded);
    return out;
  }

  private static Iterable<Headers> encodings() {
    return encodingsByName().values();
  }

  /** Each record as a plain record, as a structured CloudEvent (by header), and as binary-mode data of either type. */
  static Map<String, Headers> encodingsByName() {
    RecordHeaders structured = new RecordHeaders();
    structured.add(EventDecoder.CONTENT_TYPE, "application/cloudevents+json".getBytes(StandardCharsets.UTF_8));
    Map<String, Headers> encodings = new LinkedHashMap<>();
    encodings.put("plain", new RecordHeaders());
    encodings.put("structured", structured);
    encodings.put("binary-basket", binary(EventDecoder.BASKET_TYPE));
    encodings.put("binary-line-item", binary(EventDecoder.LINE_ITEM_TYPE));
    return encodings;
  }

  /** The recorded outcomes ({@link CorpusOutcomesTest}) are the hand-written reader's, UTF-8 aside. */
  @Test
  void theHandWrittenReaderMadeTheRecordedOutcomes() throws java.io.IOException {
    List<String> lines = CorpusOutcomesTest.outcomes(handWritten, true);
    assertEquals(String.join("\n", CorpusOutcomesTest.recorded()), String.join("\n", lines));
  }

  private static Headers binary(String type) {
    RecordHeaders headers = new RecordHeaders();
    headers.add(EventDecoder.CE_SPECVERSION, "1.0".getBytes(StandardCharsets.UTF_8));
    headers.add(EventDecoder.CE_ID, "ev".getBytes(StandardCharsets.UTF_8));
    headers.add(EventDecoder.CE_SOURCE, "/s".getBytes(StandardCharsets.UTF_8));
    headers.add(EventDecoder.CE_TYPE, type.getBytes(StandardCharsets.UTF_8));
    headers.add(EventDecoder.CE_TIME, "2026-12-02T11:00:00Z".getBytes(StandardCharsets.UTF_8));
    return headers;
  }
}
