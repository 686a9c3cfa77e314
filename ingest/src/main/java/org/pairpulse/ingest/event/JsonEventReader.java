package org.pairpulse.ingest.event;

import java.nio.ByteBuffer;
import java.nio.CharBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CharsetDecoder;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.Base64;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * A hand-written, allocation-light JSON reader for the event shapes of the contract (see README-ingest):
 * it builds no tree. One pass over an object records where the value of each known key starts (unknown
 * keys are validated and skipped); the interpretation then reads just those values in place. Strings that
 * are pure ASCII without escapes (nearly every id) become Strings by one Latin-1 copy; others are decoded
 * strictly (invalid UTF-8 is {@code malformed}). The pass also notes where the elements of an {@code items}
 * array of such plain strings lie, so the items (most of a basket's bytes) are not parsed twice: that cut
 * decoding a typical 90-byte basket by about a quarter (measured: 0.36 to 0.28 µs).
 *
 * <p>Not thread-safe: one reader per decoding thread (it keeps scratch state).
 */
final class JsonEventReader implements EventReader {
  /** Deepest nesting accepted inside unknown values; deeper input is {@code malformed}. */
  static final int MAX_DEPTH = 64;

  // key codes: positions in valueAt
  private static final int K_UNKNOWN = 0;
  private static final int K_ID = 1;
  private static final int K_TIME = 2;
  private static final int K_ITEMS = 3;
  private static final int K_ATTRIBUTES = 4;
  private static final int K_BASKET = 5;
  private static final int K_ITEM = 6;
  private static final int K_QTY = 7;
  private static final int K_END = 8;
  private static final int K_SPECVERSION = 9;
  private static final int K_TYPE = 10;
  private static final int K_SOURCE = 11;
  private static final int K_DATACONTENTTYPE = 12;
  private static final int K_DATA = 13;
  private static final int K_DATA_BASE64 = 14;
  private static final int K_SUBJECT = 15;
  private static final int KEY_CODES = 16;

  private static final byte[] ID = ascii("id");
  private static final byte[] TIME = ascii("time");
  private static final byte[] ITEMS = ascii("items");
  private static final byte[] ATTRIBUTES = ascii("attributes");
  private static final byte[] BASKET = ascii("basket");
  private static final byte[] ITEM = ascii("item");
  private static final byte[] QTY = ascii("qty");
  private static final byte[] END = ascii("end");
  private static final byte[] SPECVERSION = ascii("specversion");
  private static final byte[] TYPE = ascii("type");
  private static final byte[] SOURCE = ascii("source");
  private static final byte[] DATACONTENTTYPE = ascii("datacontenttype");
  private static final byte[] DATA = ascii("data");
  private static final byte[] DATA_BASE64 = ascii("data_base64");
  private static final byte[] SUBJECT = ascii("subject");

  private final EventLimits limits;
  private final int[] valueAt = new int[KEY_CODES];
  private final CharsetDecoder utf8 = StandardCharsets.UTF_8.newDecoder()
      .onMalformedInput(CodingErrorAction.REPORT).onUnmappableCharacter(CodingErrorAction.REPORT);
  private String[] itemScratch = new String[16];
  /** Where the last scanned items array starts when all its elements are plain strings, else -1. */
  private int plainItemsAt = -1;
  /** The number of elements of that array (only the first maxBasketItems are ever read). */
  private int plainItemCount;
  /** The [from, to) byte range of each of its first maxBasketItems elements' text, in pairs. */
  private int[] plainItemSpans = new int[32];
  private byte[] buf;
  private int pos;
  private int limit;

  JsonEventReader(EventLimits limits) {
    this.limits = limits;
  }

  // ------------------------------------------------------------------ entry points

  @Override
  public BasketEvent readRecord(byte[] bytes, int from, int to, boolean structuredCloudEvent) throws InvalidEventException {
    begin(bytes, from, to);
    scanObject(0);
    expectEnd();
    if (structuredCloudEvent || valueAt[K_SPECVERSION] >= 0) {
      return readStructured();
    }
    return readPlain(Shape.ANY, Long.MIN_VALUE);
  }

  @Override
  public BasketEvent readData(byte[] bytes, Shape shape, long ceTimeMillis) throws InvalidEventException {
    begin(bytes, 0, bytes.length);
    scanObject(0);
    expectEnd();
    return readPlain(shape, ceTimeMillis);
  }

  private void begin(byte[] bytes, int from, int to) throws InvalidEventException {
    if (bytes == null) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "record has no value");
    }
    buf = bytes;
    pos = from;
    limit = to;
    skipWs();
    if (pos >= limit) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "record value is empty");
    }
    if (buf[pos] != '{') {
      throw malformed("expected a JSON object");
    }
  }

  private void expectEnd() throws InvalidEventException {
    skipWs();
    if (pos != limit) {
      throw malformed("trailing characters after the JSON object");
    }
  }

  // ------------------------------------------------------------------ interpretation

  private BasketEvent readStructured() throws InvalidEventException {
    String specversion = requiredString(K_SPECVERSION, "specversion");
    if (!"1.0".equals(specversion)) {
      throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "CloudEvents specversion '"
          + EventReader.clip(specversion) + "' is not supported; expected 1.0");
    }
    requiredString(K_ID, "id");
    requiredString(K_SOURCE, "source");
    Shape shape = EventDecoder.shapeOfType(requiredString(K_TYPE, "type"));
    int contentTypeAt = valueAt[K_DATACONTENTTYPE];
    if (contentTypeAt >= 0 && !isNull(contentTypeAt)) {
      EventDecoder.requireJsonContentType(stringAt(contentTypeAt, "datacontenttype"));
    }
    long ceTime = Long.MIN_VALUE;
    int timeAt = valueAt[K_TIME];
    if (timeAt >= 0 && !isNull(timeAt)) {
      ceTime = EventDecoder.parseCloudEventTime(stringAt(timeAt, "time"));
    }
    int dataAt = valueAt[K_DATA];
    int base64At = valueAt[K_DATA_BASE64];
    if (dataAt >= 0 && !isNull(dataAt)) {
      if (buf[dataAt] != '{') {
        throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "CloudEvent data must be a JSON object");
      }
      pos = dataAt;
      scanObject(1);
      return readPlain(shape, ceTime);
    }
    if (base64At >= 0 && !isNull(base64At)) {
      byte[] decoded;
      try {
        decoded = Base64.getDecoder().decode(stringAt(base64At, "data_base64"));
      } catch (IllegalArgumentException e) {
        throw new InvalidEventException(DeadLetterReason.MALFORMED, "data_base64 is not base64: " + e.getMessage());
      }
      return readData(decoded, shape, ceTime);
    }
    throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "CloudEvent has no data");
  }

  private BasketEvent readPlain(Shape shape, long fallbackTime) throws InvalidEventException {
    boolean line = shape == Shape.LINE_ITEM || (shape == Shape.ANY && valueAt[K_BASKET] >= 0);
    return line ? readLine(fallbackTime) : readBasket(fallbackTime);
  }

  private Basket readBasket(long fallbackTime) throws InvalidEventException {
    String id = requiredString(K_ID, "id");
    limits.checkId("basket id", id);
    long time = requiredTime(fallbackTime);
    int itemsAt = valueAt[K_ITEMS];
    int attributesAt = valueAt[K_ATTRIBUTES];
    if (itemsAt < 0 || isNull(itemsAt)) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "basket has no 'items'");
    }
    List<String> items = readItems(itemsAt);
    Map<String, String> attributes = attributesAt < 0 || isNull(attributesAt) ? Map.of() : readAttributes(attributesAt);
    limits.checkTime(time);
    return new Basket(id, time, items, attributes);
  }

  private LineItem readLine(long fallbackTime) throws InvalidEventException {
    String basketId = requiredString(K_BASKET, "basket");
    limits.checkId("basket id", basketId);
    long time = requiredTime(fallbackTime);
    boolean end = false;
    int endAt = valueAt[K_END];
    int itemAt = valueAt[K_ITEM];
    int qtyAt = valueAt[K_QTY];
    if (endAt >= 0 && !isNull(endAt)) {
      end = booleanAt(endAt, "end");
    }
    String item = null;
    if (itemAt >= 0 && !isNull(itemAt)) {
      item = itemAt(itemAt);
    } else if (!end) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "line item has no 'item' and is no end marker");
    }
    if (qtyAt >= 0 && !isNull(qtyAt)) {
      quantityAt(qtyAt);
    }
    limits.checkTime(time);
    return new LineItem(basketId, time, item, end);
  }

  private String requiredString(int key, String name) throws InvalidEventException {
    int at = valueAt[key];
    if (at < 0 || isNull(at)) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "missing '" + name + "'");
    }
    return stringAt(at, name);
  }

  private long requiredTime(long fallbackTime) throws InvalidEventException {
    int at = valueAt[K_TIME];
    if (at < 0 || isNull(at)) {
      if (fallbackTime != Long.MIN_VALUE) {
        return fallbackTime;
      }
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "missing 'time'");
    }
    byte b = buf[at];
    if (b == '"') {
      String text = stringAt(at, "time");
      try {
        return EventTimes.parse(text);
      } catch (IllegalArgumentException e) {
        throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'time' " + e.getMessage());
      }
    }
    if (b == '-' || (b >= '0' && b <= '9')) {
      return integerAt(at, "time");
    }
    throw new InvalidEventException(DeadLetterReason.WRONG_TYPE,
        "'time' must be epoch milliseconds or an RFC 3339 string");
  }

  /** Items: an array of strings or of {"id": string, "qty": number} objects. */
  private List<String> readItems(int at) throws InvalidEventException {
    if (buf[at] != '[') {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'items' must be an array");
    }
    if (at == plainItemsAt) {
      return plainItems();
    }
    int count = 0;
    pos = at + 1;
    skipWs();
    if (peek() == ']') {
      throw emptyBasket();
    }
    while (true) {
      if (count == limits.maxBasketItems()) {
        throw oversizedBasket();
      }
      keepItem(count++, itemAt(pos));
      if (!nextElement(']', "expected ',' or ']' in 'items'")) {
        break;
      }
    }
    return immutableItems(count);
  }

  /**
   * The items of an array that {@link #scanItems} found to hold plain strings only: the same checks, in the same
   * order, as the general loop of {@link #readItems}, without parsing the strings a second time.
   */
  private List<String> plainItems() throws InvalidEventException {
    if (plainItemCount == 0) {
      throw emptyBasket();
    }
    for (int i = 0; i < plainItemCount; i++) {
      if (i == limits.maxBasketItems()) {
        throw oversizedBasket();
      }
      int from = plainItemSpans[2 * i];
      String id = new String(buf, from, plainItemSpans[2 * i + 1] - from, StandardCharsets.ISO_8859_1);
      limits.checkId("item id", id);
      keepItem(i, id);
    }
    return immutableItems(plainItemCount);
  }

  private void keepItem(int index, String id) {
    if (index == itemScratch.length) {
      itemScratch = Arrays.copyOf(itemScratch, 2 * index);
    }
    itemScratch[index] = id;
  }

  /** The first {@code count} kept items, as an immutable list. */
  private List<String> immutableItems(int count) {
    return List.of(Arrays.copyOf(itemScratch, count));
  }

  private static InvalidEventException emptyBasket() {
    return new InvalidEventException(DeadLetterReason.EMPTY_BASKET, "basket has no items");
  }

  private InvalidEventException oversizedBasket() {
    return new InvalidEventException(DeadLetterReason.OVERSIZED_BASKET, "basket has more than "
        + limits.maxBasketItems() + " items (max.basket.items)");
  }

  /** One item at {@code at}: a string, or an object with "id" and an optional positive "qty". Leaves pos after it. */
  private String itemAt(int at) throws InvalidEventException {
    byte b = buf[at];
    String id;
    if (b == '"') {
      pos = at;
      id = readString();
    } else if (b == '{') {
      id = null;
      pos = at + 1;
      skipWs();
      if (peek() != '}') {
        while (true) {
          int key = readKeyCode();
          skipWs();
          expect(':');
          skipWs();
          if (key == K_ID) {
            if (peek() != '"') {
              throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "an item's 'id' must be a string");
            }
            id = readString();
          } else if (key == K_QTY) {
            int valueStart = pos;
            skipValue(2);
            if (!isNull(valueStart)) {
              quantityAt(valueStart);
            }
          } else {
            skipValue(2);
          }
          if (!nextElement('}', "expected ',' or '}' in an item object")) {
            break;
          }
        }
      }
      pos++; // the '}'
      if (id == null) {
        throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "an item object has no 'id'");
      }
    } else {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "an item must be a string or an object with an 'id'");
    }
    limits.checkId("item id", id);
    return id;
  }

  private Map<String, String> readAttributes(int at) throws InvalidEventException {
    if (buf[at] != '{') {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'attributes' must be an object of strings");
    }
    Map<String, String> attributes = new HashMap<>();
    pos = at + 1;
    skipWs();
    if (peek() == '}') {
      return attributes;
    }
    while (true) {
      if (peek() != '"') {
        throw malformed("expected a key in 'attributes'");
      }
      String key = readString();
      skipWs();
      expect(':');
      skipWs();
      if (peek() != '"') {
        throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "attribute '" + EventReader.clip(key) + "' must be a string");
      }
      String value = readString();
      limits.checkId("attribute key", key);
      if (value.length() > limits.maxIdChars()) {
        throw new InvalidEventException(DeadLetterReason.ID_TOO_LONG, "attribute '" + EventReader.clip(key) + "' value has "
            + value.length() + " chars; max.id.chars is " + limits.maxIdChars());
      }
      attributes.put(key, value);
      if (attributes.size() > limits.maxAttributes()) {
        throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "more than " + limits.maxAttributes() + " attributes");
      }
      if (!nextElement('}', "expected ',' or '}' in 'attributes'")) {
        return attributes;
      }
    }
  }

  private void quantityAt(int at) throws InvalidEventException {
    byte b = buf[at];
    if (b != '-' && (b < '0' || b > '9')) {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'qty' must be a number");
    }
    pos = at;
    skipNumber();
    double qty = Double.parseDouble(new String(buf, at, pos - at, StandardCharsets.ISO_8859_1));
    if (!(qty > 0) || Double.isInfinite(qty)) {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'qty' must be > 0");
    }
  }

  private boolean booleanAt(int at, String name) throws InvalidEventException {
    if (buf[at] == 't') {
      return true;
    }
    if (buf[at] == 'f') {
      return false;
    }
    throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'" + name + "' must be true or false");
  }

  private String stringAt(int at, String name) throws InvalidEventException {
    if (buf[at] != '"') {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'" + name + "' must be a string");
    }
    pos = at;
    return readString();
  }

  /** An integer (epoch milliseconds): no fraction, no exponent, no overflow. */
  private long integerAt(int at, String name) throws InvalidEventException {
    pos = at;
    boolean negative = buf[pos] == '-';
    if (negative) {
      pos++;
    }
    long value = 0;
    int start = pos;
    while (pos < limit && buf[pos] >= '0' && buf[pos] <= '9') {
      int digit = buf[pos] - '0';
      if (value > (Long.MAX_VALUE - digit) / 10) {
        throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'" + name + "' is out of range");
      }
      value = value * 10 + digit;
      pos++;
    }
    if (pos == start) {
      throw malformed("expected digits");
    }
    if (pos < limit && (buf[pos] == '.' || buf[pos] == 'e' || buf[pos] == 'E')) {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "'" + name + "' must be an integer of epoch milliseconds");
    }
    return negative ? -value : value;
  }

  private boolean isNull(int at) {
    return buf[at] == 'n';
  }

  // ------------------------------------------------------------------ scanning

  /** Scans the object at pos, recording the value start of each known key; leaves pos after its '}'. */
  private void scanObject(int depth) throws InvalidEventException {
    Arrays.fill(valueAt, -1);
    plainItemsAt = -1;
    pos++; // '{'
    skipWs();
    if (peek() == '}') {
      pos++;
      return;
    }
    while (true) {
      int key = readKeyCode();
      skipWs();
      expect(':');
      skipWs();
      if (key != K_UNKNOWN) {
        valueAt[key] = pos;
      }
      if (key == K_ITEMS && peek() == '[') {
        scanItems(depth + 1);
      } else {
        skipValue(depth + 1);
      }
      if (!nextElement('}', "expected ',' or '}' after a value")) {
        pos++;
        return;
      }
    }
  }

  /**
   * {@link #skipValue} of the array of an {@code items} key (pos at its '['), which also notes where the text of
   * each element lies when every element is a plain string, so that {@link #plainItems} makes the Strings without
   * parsing them a second time. Accepts and rejects exactly what skipValue does.
   */
  private void scanItems(int depth) throws InvalidEventException {
    if (depth >= MAX_DEPTH) {
      skipValue(depth);
      return;
    }
    int at = pos;
    boolean plain = true;
    int count = 0;
    pos++;
    skipWs();
    if (peek() != ']') {
      while (true) {
        if (plain && peek() == '"') {
          int from = pos + 1;
          plain = skipString();
          notePlainItem(count++, from, pos - 1);
        } else {
          plain = false;
          skipValue(depth + 1);
        }
        if (!nextElement(']', "expected ',' or ']' in an array")) {
          break;
        }
      }
    }
    pos++;
    if (plain) {
      plainItemsAt = at;
      plainItemCount = count;
    }
  }

  /** Notes the text range of element {@code index}; elements past maxBasketItems are never read, only counted. */
  private void notePlainItem(int index, int from, int to) {
    if (index >= limits.maxBasketItems()) {
      return;
    }
    if (2 * index + 1 >= plainItemSpans.length) {
      plainItemSpans = Arrays.copyOf(plainItemSpans, 2 * plainItemSpans.length);
    }
    plainItemSpans[2 * index] = from;
    plainItemSpans[2 * index + 1] = to;
  }

  /**
   * After an element of an array or object: skips a ',' and the blanks after it and returns true, or returns
   * false with pos at {@code close}; anything else is malformed ({@code message}).
   */
  private boolean nextElement(char close, String message) throws InvalidEventException {
    skipWs();
    byte next = peek();
    if (next == ',') {
      pos++;
      skipWs();
      return true;
    }
    if (next == close) {
      return false;
    }
    throw malformed(message);
  }

  /** Reads a key string at pos and returns its code; pos ends after the closing quote. */
  private int readKeyCode() throws InvalidEventException {
    if (peek() != '"') {
      throw malformed("expected a key string");
    }
    int start = pos + 1;
    int i = start;
    while (i < limit) {
      byte b = buf[i];
      if (b == '"') {
        pos = i + 1;
        return codeOf(start, i);
      }
      if (b == '\\' || b < 0x20) { // escapes, non-ASCII or control chars: the general path
        return codeOf(readString());
      }
      i++;
    }
    throw malformed("unterminated key");
  }

  private int codeOf(int from, int to) {
    switch (to - from) {
      case 2:
        return eq(from, ID) ? K_ID : K_UNKNOWN;
      case 3:
        return eq(from, QTY) ? K_QTY : eq(from, END) ? K_END : K_UNKNOWN;
      case 4:
        return eq(from, TIME) ? K_TIME : eq(from, ITEM) ? K_ITEM : eq(from, TYPE) ? K_TYPE
            : eq(from, DATA) ? K_DATA : K_UNKNOWN;
      case 5:
        return eq(from, ITEMS) ? K_ITEMS : K_UNKNOWN;
      case 6:
        return eq(from, BASKET) ? K_BASKET : eq(from, SOURCE) ? K_SOURCE : K_UNKNOWN;
      case 7:
        return eq(from, SUBJECT) ? K_SUBJECT : K_UNKNOWN;
      case 10:
        return eq(from, ATTRIBUTES) ? K_ATTRIBUTES : K_UNKNOWN;
      case 11:
        return eq(from, SPECVERSION) ? K_SPECVERSION : eq(from, DATA_BASE64) ? K_DATA_BASE64 : K_UNKNOWN;
      case 15:
        return eq(from, DATACONTENTTYPE) ? K_DATACONTENTTYPE : K_UNKNOWN;
      default:
        return K_UNKNOWN;
    }
  }

  private static int codeOf(String key) {
    switch (key) {
      case "id": return K_ID;
      case "time": return K_TIME;
      case "items": return K_ITEMS;
      case "attributes": return K_ATTRIBUTES;
      case "basket": return K_BASKET;
      case "item": return K_ITEM;
      case "qty": return K_QTY;
      case "end": return K_END;
      case "specversion": return K_SPECVERSION;
      case "type": return K_TYPE;
      case "source": return K_SOURCE;
      case "datacontenttype": return K_DATACONTENTTYPE;
      case "data": return K_DATA;
      case "data_base64": return K_DATA_BASE64;
      case "subject": return K_SUBJECT;
      default: return K_UNKNOWN;
    }
  }

  private boolean eq(int from, byte[] name) {
    return Arrays.equals(buf, from, from + name.length, name, 0, name.length);
  }

  private void skipValue(int depth) throws InvalidEventException {
    if (depth > MAX_DEPTH) {
      throw malformed("nesting deeper than " + MAX_DEPTH);
    }
    byte b = peek();
    switch (b) {
      case '"':
        skipString();
        return;
      case '{':
        pos++;
        skipWs();
        if (peek() == '}') {
          pos++;
          return;
        }
        while (true) {
          if (peek() != '"') {
            throw malformed("expected a key string");
          }
          skipString();
          skipWs();
          expect(':');
          skipWs();
          skipValue(depth + 1);
          if (!nextElement('}', "expected ',' or '}' in an object")) {
            pos++;
            return;
          }
        }
      case '[':
        pos++;
        skipWs();
        if (peek() == ']') {
          pos++;
          return;
        }
        while (true) {
          skipValue(depth + 1);
          if (!nextElement(']', "expected ',' or ']' in an array")) {
            pos++;
            return;
          }
        }
      case 't':
        literal("true");
        return;
      case 'f':
        literal("false");
        return;
      case 'n':
        literal("null");
        return;
      default:
        if (b == '-' || (b >= '0' && b <= '9')) {
          skipNumber();
          return;
        }
        throw malformed("unexpected character '" + (char) (b & 0xFF) + "'");
    }
  }

  private void literal(String word) throws InvalidEventException {
    int n = word.length();
    if (pos + n > limit) {
      throw malformed("truncated literal");
    }
    for (int i = 0; i < n; i++) {
      if (buf[pos + i] != word.charAt(i)) {
        throw malformed("expected '" + word + "'");
      }
    }
    pos += n;
  }

  /** JSON number grammar: -? (0 | [1-9][0-9]*) (. [0-9]+)? ([eE] [+-]? [0-9]+)? */
  private void skipNumber() throws InvalidEventException {
    if (peekOr0() == '-') {
      pos++;
    }
    byte b = peekOr0();
    if (b == '0') {
      pos++;
    } else if (b >= '1' && b <= '9') {
      while (isDigitAt(pos)) {
        pos++;
      }
    } else {
      throw malformed("invalid number");
    }
    if (peekOr0() == '.') {
      pos++;
      if (!isDigitAt(pos)) {
        throw malformed("invalid number fraction");
      }
      while (isDigitAt(pos)) {
        pos++;
      }
    }
    b = peekOr0();
    if (b == 'e' || b == 'E') {
      pos++;
      b = peekOr0();
      if (b == '+' || b == '-') {
        pos++;
      }
      if (!isDigitAt(pos)) {
        throw malformed("invalid number exponent");
      }
      while (isDigitAt(pos)) {
        pos++;
      }
    }
  }

  private boolean isDigitAt(int i) {
    return i < limit && buf[i] >= '0' && buf[i] <= '9';
  }

  /** Skips the string at pos; true if it is plain: ASCII without escapes, its text the bytes between the quotes. */
  private boolean skipString() throws InvalidEventException {
    int i = pos + 1;
    boolean plain = true;
    while (i < limit) {
      byte b = buf[i];
      if (b == '"') {
        pos = i + 1;
        return plain;
      }
      if (b == '\\') {
        plain = false;
        i = escapeEnd(i);
        continue;
      }
      if (b < 0) {
        plain = false;
      } else if (b < 0x20) {
        throw malformed("control character in a string");
      }
      i++;
    }
    throw malformed("unterminated string");
  }

  /** Validates the escape at i (a backslash) and returns the index after it. */
  private int escapeEnd(int i) throws InvalidEventException {
    if (i + 1 >= limit) {
      throw malformed("unterminated escape");
    }
    switch (buf[i + 1]) {
      case '"': case '\\': case '/': case 'b': case 'f': case 'n': case 'r': case 't':
        return i + 2;
      case 'u':
        if (i + 6 > limit) {
          throw malformed("truncated \\u escape");
        }
        for (int k = i + 2; k < i + 6; k++) {
          if (Character.digit(buf[k], 16) < 0) {
            throw malformed("invalid \\u escape");
          }
        }
        return i + 6;
      default:
        throw malformed("invalid escape");
    }
  }

  /** Reads the string at pos (which is at its opening quote); pos ends after the closing quote. */
  private String readString() throws InvalidEventException {
    int start = pos + 1;
    int i = start;
    boolean ascii = true;
    while (i < limit) {
      byte b = buf[i];
      if (b == '"') {
        pos = i + 1;
        if (ascii) {
          return new String(buf, start, i - start, StandardCharsets.ISO_8859_1);
        }
        return decodeUtf8(start, i, new StringBuilder(i - start)).toString();
      }
      if (b == '\\') {
        return readEscapedString(start);
      }
      if (b < 0) {
        ascii = false;
      } else if (b < 0x20) {
        throw malformed("control character in a string");
      }
      i++;
    }
    throw malformed("unterminated string");
  }

  private String readEscapedString(int start) throws InvalidEventException {
    StringBuilder out = new StringBuilder();
    int runStart = start;
    int i = start;
    while (i < limit) {
      byte b = buf[i];
      if (b == '"') {
        decodeUtf8(runStart, i, out);
        pos = i + 1;
        return out.toString();
      }
      if (b >= 0 && b < 0x20) {
        throw malformed("control character in a string");
      }
      if (b != '\\') {
        i++;
        continue;
      }
      decodeUtf8(runStart, i, out);
      int after = escapeEnd(i);
      byte e = buf[i + 1];
      switch (e) {
        case 'b': out.append('\b'); break;
        case 'f': out.append('\f'); break;
        case 'n': out.append('\n'); break;
        case 'r': out.append('\r'); break;
        case 't': out.append('\t'); break;
        case 'u':
          out.append((char) Integer.parseInt(new String(buf, i + 2, 4, StandardCharsets.ISO_8859_1), 16));
          break;
        default: out.append((char) e); break;
      }
      i = after;
      runStart = i;
    }
    throw malformed("unterminated string");
  }

  private StringBuilder decodeUtf8(int from, int to, StringBuilder out) throws InvalidEventException {
    if (from == to) {
      return out;
    }
    try {
      CharBuffer chars = utf8.reset().decode(ByteBuffer.wrap(buf, from, to - from));
      return out.append(chars);
    } catch (CharacterCodingException e) {
      throw malformed("invalid UTF-8 in a string");
    }
  }

  private void skipWs() {
    while (pos < limit) {
      byte b = buf[pos];
      if (b != ' ' && b != '\n' && b != '\r' && b != '\t') {
        return;
      }
      pos++;
    }
  }

  private byte peek() throws InvalidEventException {
    if (pos >= limit) {
      throw malformed("unexpected end of input");
    }
    return buf[pos];
  }

  private byte peekOr0() {
    return pos < limit ? buf[pos] : 0;
  }

  private void expect(char c) throws InvalidEventException {
    if (peek() != c) {
      throw malformed("expected '" + c + "'");
    }
    pos++;
  }

  private InvalidEventException malformed(String why) {
    return new InvalidEventException(DeadLetterReason.MALFORMED, "invalid JSON at byte " + pos + ": " + why);
  }

  private static byte[] ascii(String s) {
    return s.getBytes(StandardCharsets.US_ASCII);
  }
}
