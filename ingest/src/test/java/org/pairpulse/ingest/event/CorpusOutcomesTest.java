package org.pairpulse.ingest.event;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.TreeMap;
import org.apache.kafka.common.header.Headers;
import org.apache.kafka.common.header.internals.RecordHeaders;
import org.junit.jupiter.api.Test;

/**
 * A compatibility fixture of the decoder's behaviour: for each group of {@link EventCorpus} and each encoding, how many
 * records became events, how many went to each dead-letter reason, and a SHA-256 over every outcome (the event with
 * its attributes in key order, or the reason) in corpus order. {@code event/corpus-outcomes.txt} was recorded from the
 * hand-written reader ({@code JsonEventReader}) that the Jackson reader replaced (issue 14), while a test held the two
 * to the same outcome on every record; with one change: a record that is no UTF-8 is {@code malformed}, where the
 * hand-written reader checked UTF-8 only in the strings it read. A decoder that returns another event or reason for
 * any record of the corpus fails here; the counts per reason show where.
 */
class CorpusOutcomesTest {
  static final String FIXTURE = "/event/corpus-outcomes.txt";

  @Test
  void theDecoderReproducesTheRecordedOutcomes() throws IOException {
    EventDecoder decoder = new EventDecoder(EventDecoderTest.limits());
    assertEquals(String.join("\n", recorded()), String.join("\n", outcomes(decoder)), "outcomes differ from " + FIXTURE);
  }

  static List<String> recorded() throws IOException {
    try (InputStream in = CorpusOutcomesTest.class.getResourceAsStream(FIXTURE)) {
      if (in == null) {
        throw new IOException(FIXTURE + " is missing");
      }
      return new String(in.readAllBytes(), StandardCharsets.UTF_8).lines().filter(l -> !l.startsWith("#")).toList();
    }
  }

  /** The corpus groups, in order. */
  static Map<String, List<byte[]>> groups() {
    Map<String, List<byte[]>> groups = new LinkedHashMap<>();
    groups.put("valid", utf8(EventCorpus.valid(3000, 11)));
    groups.put("poison", utf8(EventCorpus.poison()));
    groups.put("edges", utf8(EventCorpus.edges()));
    groups.put("not-utf8", EventCorpus.notUtf8());
    List<String> seeds = new ArrayList<>(EventCorpus.MUTATION_SEEDS);
    seeds.addAll(EventCorpus.valid(40, 12));
    Random random = new Random(13);
    List<byte[]> mutated = new ArrayList<>();
    for (int n = 0; n < 60_000; n++) {
      mutated.add(EventCorpus.mutate(seeds.get(n % seeds.size()), random));
    }
    groups.put("mutated", mutated);
    return groups;
  }

  /** One line per group and encoding. */
  static List<String> outcomes(EventDecoder decoder) {
    List<String> lines = new ArrayList<>();
    Map<String, Headers> encodings = encodings();
    groups().forEach((group, records) -> encodings.forEach((encoding, headers) -> {
      Map<DeadLetterReason, Integer> reasons = new EnumMap<>(DeadLetterReason.class);
      int events = 0;
      MessageDigest sha = sha256();
      for (byte[] record : records) {
        String outcome;
        try {
          outcome = describe(decoder.decode(record, headers));
        } catch (InvalidEventException e) {
          outcome = e.reason().wireName();
        }
        if (outcome.startsWith("event ")) {
          events++;
        } else {
          reasons.merge(DeadLetterReason.fromWireName(outcome), 1, Integer::sum);
        }
        sha.update((outcome + "\n").getBytes(StandardCharsets.UTF_8));
      }
      StringBuilder line = new StringBuilder(group + " " + encoding + " records=" + records.size() + " events=" + events);
      reasons.forEach((reason, count) -> line.append(' ').append(reason.wireName()).append('=').append(count));
      lines.add(line.append(" sha256=").append(HexFormat.of().formatHex(sha.digest())).toString());
    }));
    return lines;
  }

  /** Each record as a plain record, as a structured CloudEvent (by header), and as binary-mode data of either type. */
  static Map<String, Headers> encodings() {
    RecordHeaders structured = new RecordHeaders();
    structured.add(EventDecoder.CONTENT_TYPE, "application/cloudevents+json".getBytes(StandardCharsets.UTF_8));
    Map<String, Headers> encodings = new LinkedHashMap<>();
    encodings.put("plain", new RecordHeaders());
    encodings.put("structured", structured);
    encodings.put("binary-basket", binary(EventDecoder.BASKET_TYPE));
    encodings.put("binary-line-item", binary(EventDecoder.LINE_ITEM_TYPE));
    return encodings;
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

  private static String describe(BasketEvent event) {
    if (event instanceof Basket basket) {
      return "event basket " + basket.basketId() + " " + basket.eventMillis() + " " + basket.items() + " "
          + new TreeMap<>(basket.attributes());
    }
    LineItem line = (LineItem) event;
    return "event line " + line.basketId() + " " + line.eventMillis() + " " + line.item() + " " + line.end();
  }

  private static MessageDigest sha256() {
    try {
      return MessageDigest.getInstance("SHA-256");
    } catch (NoSuchAlgorithmException e) {
      throw new IllegalStateException(e);
    }
  }

  static List<byte[]> utf8(List<String> records) {
    List<byte[]> out = new ArrayList<>();
    for (String record : records) {
      out.add(record.getBytes(StandardCharsets.UTF_8));
    }
    return out;
  }
}
