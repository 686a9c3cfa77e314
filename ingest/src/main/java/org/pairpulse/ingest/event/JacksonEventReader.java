package org.pairpulse.ingest.event;

import static org.pairpulse.ingest.event.EventFields.ATTRIBUTES;
import static org.pairpulse.ingest.event.EventFields.DATA;
import static org.pairpulse.ingest.event.EventFields.DATACONTENTTYPE;
import static org.pairpulse.ingest.event.EventFields.DATA_BASE64;
import static org.pairpulse.ingest.event.EventFields.ID;
import static org.pairpulse.ingest.event.EventFields.ITEM;
import static org.pairpulse.ingest.event.EventFields.ITEMS;
import static org.pairpulse.ingest.event.EventFields.QTY;
import static org.pairpulse.ingest.event.EventFields.SOURCE;
import static org.pairpulse.ingest.event.EventFields.SPECVERSION;
import static org.pairpulse.ingest.event.EventFields.TIME;
import static org.pairpulse.ingest.event.EventFields.TYPE;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadConstraints;
import java.io.IOException;
import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.CharBuffer;
import java.nio.charset.CharsetDecoder;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.Base64;
import java.util.HashMap;
import java.util.Map;

/**
 * The event JSON read with Jackson's streaming parser (jackson-core's {@link JsonParser}: tokens, no tree, no data
 * binding). One pass over the record proves it one well-formed JSON object and keeps the values of the contract's
 * keys in {@link EventFields}; unknown keys are parsed and dropped. Then the kept values are checked in the
 * contract's order, so a record with several problems always reports the same one: first any JSON error
 * ({@code malformed}), then the envelope, the ids, the time, the items, the attributes, the time bounds.
 *
 * <h2>Checked before Jackson sees the bytes</h2>
 * <ul>
 *   <li>the first non-blank byte is '{';</li>
 *   <li>no NUL among the first four bytes: Jackson would take NULs there for UTF-16 or UTF-32 (JSON in UTF-8 has
 *       no NUL byte at all, so such a record is malformed anyway);</li>
 *   <li>valid UTF-8 throughout (RFC 3629, by the JDK's strict decoder, only when a byte is not ASCII): Jackson checks
 *       the bytes it decodes but lets overlong forms and encoded surrogates through. A record that is not UTF-8
 *       (RFC 8259 §8.1) is {@code malformed}, whatever else is wrong with it.</li>
 * </ul>
 * Values nest at most {@link #MAX_DEPTH} deep (the event's keys are depth 1); Jackson's own length limits are lifted
 * (the Kafka record size bounds a record).
 *
 * <h2>Why Jackson</h2>
 * It replaced a hand-written reader of 915 lines (issue 14: keep that one only if it is at least 1.5 times faster on
 * the whole decode path). On a seeded mix of baskets, line items, large baskets, CloudEvents and invalid records
 * ({@code bench json}, 2026-12-03) the hand-written reader was 1.23 to 1.33 times faster (on large baskets it was
 * slower); the figures are in README-ingest. The outcomes it gave on the test corpus are kept as a fixture
 * ({@code CorpusOutcomesTest}).
 *
 * <p>Not thread-safe: one reader per decoding thread (it keeps scratch state).
 */
final class JacksonEventReader {
  /** What shape a payload must have. */
  enum Shape { ANY, BASKET, LINE_ITEM }

  /** Deepest nesting of a value; deeper input is {@code malformed}. */
  static final int MAX_DEPTH = 64;

  private static final JsonFactory JSON = JsonFactory.builder()
      .streamReadConstraints(StreamReadConstraints.builder()
          .maxNumberLength(Integer.MAX_VALUE)
          .maxStringLength(Integer.MAX_VALUE)
          .maxNameLength(Integer.MAX_VALUE)
          .build())
      .build();

  /** Eight bytes of an array as one long: the ASCII test takes the high bit of each at once. */
  private static final VarHandle LONGS = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);
  private static final long HIGH_BITS = 0x8080808080808080L;

  private final EventLimits limits;
  private final EventChecks checks;
  private final EventFields fields = new EventFields();
  /** The fields of a structured CloudEvent's {@code data} object. */
  private final EventFields data = new EventFields();
  private final CharsetDecoder utf8 = StandardCharsets.UTF_8.newDecoder()
      .onMalformedInput(CodingErrorAction.REPORT).onUnmappableCharacter(CodingErrorAction.REPORT);
  private CharBuffer utf8Scratch = CharBuffer.allocate(256);
  /** Why the item {@link #readItem} read last has no id; null when it has one. */
  private InvalidEventException itemProblem;

  JacksonEventReader(EventLimits limits) {
    this.limits = limits;
    this.checks = new EventChecks(limits);
  }

  /** A whole record: a plain event, or a structured-mode CloudEvent (by header or by its specversion key). */
  BasketEvent readRecord(byte[] bytes, int from, int to, boolean structuredCloudEvent) throws InvalidEventException {
    parse(bytes, from, to);
    if (structuredCloudEvent || fields.has(SPECVERSION)) {
      return readStructured();
    }
    return checks.plain(fields, Shape.ANY, Long.MIN_VALUE);
  }

  /** The data of a binary-mode CloudEvent: a plain event of {@code shape}, its time defaulting to {@code ceTimeMillis}. */
  BasketEvent readData(byte[] bytes, Shape shape, long ceTimeMillis) throws InvalidEventException {
    parse(bytes, 0, bytes.length);
    return checks.plain(fields, shape, ceTimeMillis);
  }

  // ------------------------------------------------------------------ the pass: JSON errors, values kept

  private void parse(byte[] bytes, int from, int to) throws InvalidEventException {
    precheck(bytes, from, to);
    try (JsonParser parser = JSON.createParser(bytes, from, to - from)) {
      parser.nextToken(); // '{', as the precheck saw
      captureObject(parser, fields, data, 0);
      if (parser.nextToken() != null) {
        throw malformed(parser, "trailing characters after the JSON object");
      }
    } catch (JsonProcessingException e) {
      long at = e.getLocation() == null ? -1 : e.getLocation().getByteOffset();
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "invalid JSON at byte " + at + ": "
          + EventDecoder.clip(String.valueOf(e.getOriginalMessage())));
    } catch (IOException e) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "invalid JSON: " + e.getMessage());
    }
  }

  private void precheck(byte[] bytes, int from, int to) throws InvalidEventException {
    if (bytes == null) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "record has no value");
    }
    int at = from;
    while (at < to && (bytes[at] == ' ' || bytes[at] == '\n' || bytes[at] == '\r' || bytes[at] == '\t')) {
      at++;
    }
    if (at >= to) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "record value is empty");
    }
    if (bytes[at] != '{') {
      throw malformedAt(at, "expected a JSON object");
    }
    for (int i = from; i < Math.min(from + 4, to); i++) {
      if (bytes[i] == 0) {
        throw malformedAt(i, "NUL byte");
      }
    }
    int firstNonAscii = firstNonAscii(bytes, from, to);
    if (firstNonAscii < to) {
      requireUtf8(bytes, firstNonAscii, to);
    }
  }

  /** The first byte in [from, to) above 0x7F, or {@code to}; eight bytes at a time while it can. */
  static int firstNonAscii(byte[] bytes, int from, int to) {
    int at = from;
    while (at + Long.BYTES <= to && ((long) LONGS.get(bytes, at) & HIGH_BITS) == 0) {
      at += Long.BYTES;
    }
    while (at < to && bytes[at] >= 0) {
      at++;
    }
    return at;
  }

  /** Strict UTF-8 from {@code from}, the start of a sequence, to {@code to}. */
  private void requireUtf8(byte[] bytes, int from, int to) throws InvalidEventException {
    if (utf8Scratch.capacity() < to - from) {
      utf8Scratch = CharBuffer.allocate(to - from);
    }
    utf8Scratch.clear();
    ByteBuffer in = ByteBuffer.wrap(bytes, from, to - from);
    if (utf8.reset().decode(in, utf8Scratch, true).isError() || utf8.flush(utf8Scratch).isError()) {
      throw malformedAt(in.position(), "invalid UTF-8");
    }
  }

  /**
   * The members of the object whose '{' the parser is at, into {@code into}; a {@code data} object's into
   * {@code nested} (when not null). {@code depth} is the object's own depth.
   */
  private void captureObject(JsonParser parser, EventFields into, EventFields nested, int depth)
      throws IOException, InvalidEventException {
    into.clear();
    String name;
    while ((name = parser.nextFieldName()) != null) {
      JsonToken token = parser.nextToken();
      int key = EventFields.keyOf(name);
      if (key == EventFields.UNKNOWN) {
        skip(parser, token, depth + 1);
        continue;
      }
      into.token[key] = token;
      if (token == JsonToken.VALUE_STRING) {
        into.text[key] = parser.getText();
      } else if (key == ITEMS && token == JsonToken.START_ARRAY) {
        captureItems(parser, into, depth + 1);
      } else if (key == ITEM && token == JsonToken.START_OBJECT) {
        into.item = readItem(parser, token, depth + 1);
        into.itemProblem = itemProblem;
      } else if (key == ATTRIBUTES && token == JsonToken.START_OBJECT) {
        captureAttributes(parser, into, depth + 1);
      } else if (key == DATA && token == JsonToken.START_OBJECT && nested != null) {
        captureObject(parser, nested, null, depth + 1);
      } else if (key == TIME && token == JsonToken.VALUE_NUMBER_INT) {
        JsonParser.NumberType type = parser.getNumberType();
        into.timeInRange = type == JsonParser.NumberType.INT || type == JsonParser.NumberType.LONG;
        into.timeMillis = into.timeInRange ? parser.getLongValue() : 0;
        into.timeInRange &= into.timeMillis != Long.MIN_VALUE; // its magnitude is no long
      } else if (key == QTY && token.isNumeric()) {
        into.qty = parser.getDoubleValue();
      } else {
        skip(parser, token, depth + 1);
      }
    }
    requireClosed(parser, JsonToken.END_OBJECT);
  }

  /** The elements of an {@code items} array at {@code depth}; only the first maxBasketItems are ever read. */
  private void captureItems(JsonParser parser, EventFields into, int depth) throws IOException, InvalidEventException {
    int max = limits.maxBasketItems();
    int count = 0;
    into.itemErrorAt = -1;
    into.itemError = null;
    JsonToken token;
    while ((token = parser.nextToken()) != JsonToken.END_ARRAY) {
      requireToken(parser, token);
      if (count >= max || into.itemError != null) {
        skip(parser, token, depth + 1);
      } else {
        String id = token == JsonToken.VALUE_STRING ? parser.getText() : readItem(parser, token, depth + 1);
        if (id == null) {
          into.itemErrorAt = count;
          into.itemError = itemProblem;
        } else {
          if (count == into.itemIds.length) {
            into.itemIds = Arrays.copyOf(into.itemIds, 2 * count);
          }
          into.itemIds[count] = id;
        }
      }
      count++;
    }
    into.itemCount = count;
  }

  /**
   * One item (a string, or an object with a string "id" and an optional positive "qty") at {@code depth}: its id,
   * or null with {@link #itemProblem} saying why (the first problem in key order).
   */
  private String readItem(JsonParser parser, JsonToken token, int depth) throws IOException, InvalidEventException {
    itemProblem = null;
    if (token == JsonToken.VALUE_STRING) {
      return parser.getText();
    }
    if (token != JsonToken.START_OBJECT) {
      skip(parser, token, depth);
      itemProblem = EventChecks.wrongType("an item must be a string or an object with an 'id'");
      return null;
    }
    String id = null;
    InvalidEventException problem = null;
    String name;
    while ((name = parser.nextFieldName()) != null) {
      JsonToken value = parser.nextToken();
      if (problem == null && name.equals("id")) {
        if (value == JsonToken.VALUE_STRING) {
          id = parser.getText();
        } else {
          problem = EventChecks.wrongType("an item's 'id' must be a string");
        }
      } else if (problem == null && name.equals("qty") && value != JsonToken.VALUE_NULL) {
        problem = value.isNumeric() ? EventChecks.quantityProblem(parser.getDoubleValue()) : EventChecks.wrongType("'qty' must be a number");
      }
      skip(parser, value, depth + 1);
    }
    requireClosed(parser, JsonToken.END_OBJECT);
    if (problem == null && id == null) {
      problem = new InvalidEventException(DeadLetterReason.MISSING_FIELD, "an item object has no 'id'");
    }
    itemProblem = problem;
    return problem == null ? id : null;
  }

  /** The entries of an {@code attributes} object at {@code depth}, or the first problem among them. */
  private void captureAttributes(JsonParser parser, EventFields into, int depth) throws IOException, InvalidEventException {
    Map<String, String> attributes = new HashMap<>();
    InvalidEventException problem = null;
    String key;
    while ((key = parser.nextFieldName()) != null) {
      JsonToken value = parser.nextToken();
      if (problem == null && value != JsonToken.VALUE_STRING) {
        problem = EventChecks.wrongType("attribute '" + EventDecoder.clip(key) + "' must be a string");
      } else if (problem == null) {
        problem = attributeProblem(key, parser.getText(), attributes);
      }
      skip(parser, value, depth + 1);
    }
    requireClosed(parser, JsonToken.END_OBJECT);
    into.attributes = attributes;
    into.attributesProblem = problem;
  }

  /** Adds one attribute, or says why it cannot be added. */
  private InvalidEventException attributeProblem(String key, String value, Map<String, String> attributes) {
    try {
      limits.checkId("attribute key", key);
    } catch (InvalidEventException e) {
      return e;
    }
    if (value.length() > limits.maxIdChars()) {
      return new InvalidEventException(DeadLetterReason.ID_TOO_LONG, "attribute '" + EventDecoder.clip(key) + "' value has "
          + value.length() + " chars; max.id.chars is " + limits.maxIdChars());
    }
    attributes.put(key, value);
    if (attributes.size() > limits.maxAttributes()) {
      return EventChecks.wrongType("more than " + limits.maxAttributes() + " attributes");
    }
    return null;
  }

  /** Skips the value whose first token is {@code token}, at {@code depth}, checking the nesting. */
  private static void skip(JsonParser parser, JsonToken token, int depth) throws IOException, InvalidEventException {
    if (depth > MAX_DEPTH) {
      throw malformed(parser, "nesting deeper than " + MAX_DEPTH);
    }
    if (token == JsonToken.START_OBJECT) {
      while (parser.nextFieldName() != null) {
        skip(parser, parser.nextToken(), depth + 1);
      }
      requireClosed(parser, JsonToken.END_OBJECT);
    } else if (token == JsonToken.START_ARRAY) {
      JsonToken element;
      while ((element = parser.nextToken()) != JsonToken.END_ARRAY) {
        requireToken(parser, element);
        skip(parser, element, depth + 1);
      }
    }
  }

  /** Jackson reports a truncated container itself; this keeps a null token from ever passing for a value. */
  private static void requireToken(JsonParser parser, JsonToken token) throws InvalidEventException {
    if (token == null) {
      throw malformed(parser, "unexpected end of input");
    }
  }

  private static void requireClosed(JsonParser parser, JsonToken close) throws InvalidEventException {
    if (parser.currentToken() != close) {
      throw malformed(parser, "unexpected end of input");
    }
  }

  // ------------------------------------------------------------------ the envelope (the event: EventChecks)

  private BasketEvent readStructured() throws InvalidEventException {
    String specversion = EventChecks.requiredString(fields, SPECVERSION, "specversion");
    if (!"1.0".equals(specversion)) {
      throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "CloudEvents specversion '"
          + EventDecoder.clip(specversion) + "' is not supported; expected 1.0");
    }
    EventChecks.requiredString(fields, ID, "id");
    EventChecks.requiredString(fields, SOURCE, "source");
    Shape shape = EventDecoder.shapeOfType(EventChecks.requiredString(fields, TYPE, "type"));
    if (fields.given(DATACONTENTTYPE)) {
      EventDecoder.requireJsonContentType(EventChecks.string(fields, DATACONTENTTYPE, "datacontenttype"));
    }
    long ceTime = Long.MIN_VALUE;
    if (fields.given(TIME)) {
      ceTime = EventDecoder.parseCloudEventTime(EventChecks.string(fields, TIME, "time"));
    }
    if (fields.given(DATA)) {
      if (fields.token[DATA] != JsonToken.START_OBJECT) {
        throw EventChecks.wrongType("CloudEvent data must be a JSON object");
      }
      return checks.plain(data, shape, ceTime);
    }
    if (fields.given(DATA_BASE64)) {
      byte[] decoded;
      try {
        decoded = Base64.getDecoder().decode(EventChecks.string(fields, DATA_BASE64, "data_base64"));
      } catch (IllegalArgumentException e) {
        throw new InvalidEventException(DeadLetterReason.MALFORMED, "data_base64 is not base64: " + e.getMessage());
      }
      return readData(decoded, shape, ceTime);
    }
    throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "CloudEvent has no data");
  }

  private static InvalidEventException malformed(JsonParser parser, String why) {
    return malformedAt(parser.currentLocation().getByteOffset(), why);
  }

  private static InvalidEventException malformedAt(long at, String why) {
    return new InvalidEventException(DeadLetterReason.MALFORMED, "invalid JSON at byte " + at + ": " + why);
  }
}
