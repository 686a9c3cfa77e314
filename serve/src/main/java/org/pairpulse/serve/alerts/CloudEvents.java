package org.pairpulse.serve.alerts;

import java.net.URLEncoder;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.LinkedHashMap;
import java.util.Map;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.wire.Json;
import org.pairpulse.serve.wire.Wire;

/**
 * Alert events as CloudEvents 1.0 in structured JSON mode (CloudEvents spec 1.0.2, JSON event
 * format): one JSON object holding the context attributes and the event's {@code data}.
 *
 * <pre>
 *   specversion      1.0
 *   id               the alert event's stable id (same transition, same id: consumers can deduplicate)
 *   source           /pairpulse/serve
 *   type             org.pairpulse.alert.&lt;kind&gt;.&lt;transition&gt;, e.g. org.pairpulse.alert.emerging.raised
 *   subject          pairs/&lt;a&gt;/&lt;b&gt; (ids URL-encoded, a &lt; b)
 *   time             the transition's time (RFC 3339)
 *   datacontenttype  application/json
 *   segment          extension attribute: the segment
 *   data             kind, transition, segment, a, b, times, table version and the evidence
 * </pre>
 * On Kafka the record value is this object, the key the subject, and the header
 * {@code content-type: application/cloudevents+json; charset=UTF-8} (the Kafka protocol binding's
 * structured mode); over HTTP the same body with that content type (the HTTP binding's structured mode).
 */
public final class CloudEvents {
  private CloudEvents() {}

  /** The media type of a structured-mode CloudEvent in JSON. */
  public static final String CONTENT_TYPE = "application/cloudevents+json; charset=UTF-8";
  public static final String SOURCE = "/pairpulse/serve";

  public static String type(AlertEvent event) {
    return "org.pairpulse.alert." + event.kind().wireName() + "." + event.transition().wireName();
  }

  public static String subject(AlertEvent event) {
    return "pairs/" + URLEncoder.encode(event.pair().first(), StandardCharsets.UTF_8) + "/"
        + URLEncoder.encode(event.pair().second(), StandardCharsets.UTF_8);
  }

  /** The event as a structured-mode CloudEvent object. */
  public static Map<String, Object> of(AlertEvent event) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("specversion", "1.0");
    out.put("id", event.id());
    out.put("source", SOURCE);
    out.put("type", type(event));
    out.put("subject", subject(event));
    out.put("time", Instant.ofEpochMilli(event.atMillis()).toString());
    out.put("datacontenttype", "application/json");
    out.put("segment", event.segment());
    out.put("data", Wire.alert(event));
    return out;
  }

  /** The event as UTF-8 JSON bytes. */
  public static byte[] json(AlertEvent event) {
    return Json.bytes(of(event));
  }
}
