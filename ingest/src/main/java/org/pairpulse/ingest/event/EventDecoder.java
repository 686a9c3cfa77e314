package org.pairpulse.ingest.event;

import java.nio.charset.StandardCharsets;
import java.util.Locale;
import java.util.Objects;
import org.apache.kafka.common.header.Header;
import org.apache.kafka.common.header.Headers;

/**
 * Turns a record's bytes (and headers) into a {@link BasketEvent}, or says why not with an
 * {@link InvalidEventException}. The event contract is described in README-ingest.md and
 * {@code schema/basket-event.schema.json}.
 *
 * <h2>Three encodings of the same two events</h2>
 * <ol>
 *   <li>Plain JSON: the record value is a basket event ({@code id, time, items}) or a line-item event
 *       ({@code basket, time, item | end}).</li>
 *   <li>CloudEvents 1.0, structured mode (Kafka protocol binding §3.3): the header {@code content-type}
 *       starts with {@code application/cloudevents} and the value is the JSON envelope; the event sits
 *       in {@code data} (or {@code data_base64}). An envelope without that header is recognised by its
 *       {@code specversion} key, which plain events never carry.</li>
 *   <li>CloudEvents 1.0, binary mode (binding §3.2): the attributes are {@code ce_}-prefixed headers
 *       (UTF-8), {@code content-type} is the data's media type, and the value is the plain event.</li>
 * </ol>
 * The CloudEvent {@code type} says which event the data is ({@link #BASKET_TYPE}, {@link #LINE_ITEM_TYPE});
 * its {@code time} is used when the data carries none. The binding is decoded here, by hand, rather than
 * with the CloudEvents SDK: the SDK materialises every attribute and a Jackson tree per record, and the
 * contract needs four attributes. The tests check interoperability against records written by the SDK.
 *
 * <h2>The JSON</h2>
 * {@link JacksonEventReader} reads it with jackson-core's streaming parser (tokens, no tree) and checks it against
 * the contract; every record that is refused gets its {@link DeadLetterReason}.
 *
 * <h2>Threading</h2>
 * Not thread-safe (scratch buffers): use one decoder per thread. Decoding allocates a parser, the event, its
 * Strings and an item list; no tree.
 */
public final class EventDecoder {
  /** CloudEvents {@code type} of a basket event. */
  public static final String BASKET_TYPE = "org.pairpulse.basket.v1";
  /** CloudEvents {@code type} of a line-item event. */
  public static final String LINE_ITEM_TYPE = "org.pairpulse.line-item.v1";

  static final String CONTENT_TYPE = "content-type";
  static final String CE_SPECVERSION = "ce_specversion";
  static final String CE_ID = "ce_id";
  static final String CE_SOURCE = "ce_source";
  static final String CE_TYPE = "ce_type";
  static final String CE_TIME = "ce_time";

  private final EventLimits limits;
  private final JacksonEventReader reader;

  public EventDecoder(EventLimits limits) {
    this.limits = Objects.requireNonNull(limits, "limits");
    this.reader = new JacksonEventReader(limits);
  }

  public EventLimits limits() {
    return limits;
  }

  /** Decodes a Kafka record value with its headers (plain, structured or binary CloudEvent). */
  public BasketEvent decode(byte[] value, Headers headers) throws InvalidEventException {
    if (headers != null) {
      Header specversion = headers.lastHeader(CE_SPECVERSION);
      if (specversion != null) {
        return decodeBinary(value, headers, utf8(specversion));
      }
      Header contentType = headers.lastHeader(CONTENT_TYPE);
      if (contentType != null) {
        String type = utf8(contentType).trim().toLowerCase(Locale.ROOT);
        if (type.startsWith("application/cloudevents-batch")) {
          throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "CloudEvents batch mode is not supported");
        }
        if (type.startsWith("application/cloudevents")) {
          if (!type.startsWith("application/cloudevents+json")) {
            throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "structured CloudEvent format '"
                + clip(type) + "' is not supported; use application/cloudevents+json");
          }
          return reader.readRecord(value, 0, length(value), true);
        }
      }
    }
    return reader.readRecord(value, 0, length(value), false);
  }

  /** Decodes one JSON text (a JSON line of a file): a plain event or a structured CloudEvent. */
  public BasketEvent decodeJson(byte[] bytes, int from, int to) throws InvalidEventException {
    return reader.readRecord(bytes, from, to, false);
  }

  private BasketEvent decodeBinary(byte[] value, Headers headers, String specversion) throws InvalidEventException {
    if (!"1.0".equals(specversion)) {
      throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "CloudEvents specversion '"
          + clip(specversion) + "' is not supported; expected 1.0");
    }
    requireHeader(headers, CE_ID);
    requireHeader(headers, CE_SOURCE);
    JacksonEventReader.Shape shape = shapeOfType(requireHeader(headers, CE_TYPE));
    Header contentType = headers.lastHeader(CONTENT_TYPE);
    if (contentType != null) {
      requireJsonContentType(utf8(contentType));
    }
    Header time = headers.lastHeader(CE_TIME);
    long ceTime = time == null ? Long.MIN_VALUE : parseCloudEventTime(utf8(time));
    if (value == null || value.length == 0) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "binary-mode CloudEvent has no data");
    }
    return reader.readData(value, shape, ceTime);
  }

  private static String requireHeader(Headers headers, String name) throws InvalidEventException {
    Header header = headers.lastHeader(name);
    if (header == null || header.value() == null || header.value().length == 0) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "binary-mode CloudEvent has no '" + name + "' header");
    }
    return utf8(header);
  }

  static JacksonEventReader.Shape shapeOfType(String type) throws InvalidEventException {
    if (BASKET_TYPE.equals(type)) {
      return JacksonEventReader.Shape.BASKET;
    }
    if (LINE_ITEM_TYPE.equals(type)) {
      return JacksonEventReader.Shape.LINE_ITEM;
    }
    throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "CloudEvent type '" + clip(type)
        + "' is not one of " + BASKET_TYPE + ", " + LINE_ITEM_TYPE);
  }

  /** JSON media types: application/json, text/json, or any {@code +json} suffix; parameters allowed. */
  static void requireJsonContentType(String contentType) throws InvalidEventException {
    String type = contentType.trim().toLowerCase(Locale.ROOT);
    int semicolon = type.indexOf(';');
    if (semicolon >= 0) {
      type = type.substring(0, semicolon).trim();
    }
    if (!(type.equals("application/json") || type.equals("text/json") || type.endsWith("+json"))) {
      throw new InvalidEventException(DeadLetterReason.UNSUPPORTED_EVENT, "data content type '"
          + clip(contentType) + "' is not JSON");
    }
  }

  static long parseCloudEventTime(String text) throws InvalidEventException {
    try {
      return EventTimes.parse(text);
    } catch (IllegalArgumentException e) {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "CloudEvent 'time' " + e.getMessage());
    }
  }

  /** At most 40 chars of {@code s}, for messages that quote input. */
  static String clip(String s) {
    return s.length() > 40 ? s.substring(0, 40) + "..." : s;
  }

  private static int length(byte[] value) {
    return value == null ? 0 : value.length;
  }

  private static String utf8(Header header) {
    return header.value() == null ? "" : new String(header.value(), StandardCharsets.UTF_8);
  }
}
