package org.pairpulse.ops.bench;

import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.kafka.common.header.Headers;
import org.apache.kafka.common.header.internals.RecordHeaders;

/**
 * The records of {@code bench json}: a seeded mix of what a basket topic carries (invented data). Item ids are
 * {@code sku-<rank>} with Zipf(1.0) popularity over the catalog; event times lie in the last two days.
 * <pre>
 *   kind              share  shape
 *   basket            70 %   {"id","time","items":[1 + Poisson(3) ids]}: ~90 bytes; a fifth with attributes,
 *                            a tenth with an unknown key; time as epoch ms, or (3 in 10) RFC 3339
 *   line item         15 %   {"basket","time","item"}: an id (8 in 10), an {"id","qty"} object, or an end marker
 *   large basket       5 %   20..80 items, a quarter as {"id","qty"} objects, with attributes: ~1 KB
 *   CloudEvent         5 %   structured envelope with data (half), or binary mode: ce_ headers and a plain value
 *   invalid            5 %   one reason each in turn: malformed (cut short), missing_field, wrong_type,
 *                            empty_basket, id_too_long, time_too_old
 * </pre>
 * Not thread-safe.
 */
final class JsonBenchRecords {
  /** The record kinds, in the order of the table above. */
  enum Kind { BASKET, LINE_ITEM, LARGE_BASKET, CLOUD_EVENT, INVALID }

  /** One record: its value, its headers (null for none) and its kind. */
  record Record(byte[] value, Headers headers, Kind kind) {}

  private static final String[] CHANNELS = {"web", "app", "store"};
  private static final String[] REGIONS = {"north", "south", "east", "west"};
  private static final long DAY_MILLIS = 86_400_000L;

  private final ZipfSampler items;
  private final SplittableRandom random;
  private final long nowMillis;
  private final StringBuilder json = new StringBuilder(2048);
  private long next;

  JsonBenchRecords(int catalogItems, long nowMillis, long seed) {
    this.items = new ZipfSampler(catalogItems, 1.0);
    this.random = new SplittableRandom(seed);
    this.nowMillis = nowMillis;
  }

  /** {@code count} records of the mix. */
  List<Record> generate(int count) {
    List<Record> out = new ArrayList<>(count);
    for (int i = 0; i < count; i++) {
      out.add(next());
    }
    return out;
  }

  Record next() {
    long n = next++;
    int kind = random.nextInt(100);
    if (kind < 70) {
      return plain(basket(n, 1 + poisson(3), random.nextInt(5) == 0, random.nextInt(10) == 0), Kind.BASKET);
    }
    if (kind < 85) {
      return plain(lineItem(n), Kind.LINE_ITEM);
    }
    if (kind < 90) {
      return plain(basket(n, 20 + random.nextInt(61), true, false), Kind.LARGE_BASKET);
    }
    if (kind < 95) {
      return cloudEvent(n);
    }
    return plain(invalid(n), Kind.INVALID);
  }

  private static Record plain(String value, Kind kind) {
    return new Record(value.getBytes(StandardCharsets.UTF_8), null, kind);
  }

  private String basket(long n, int size, boolean attributes, boolean unknownKey) {
    json.setLength(0);
    json.append("{\"id\":\"o-").append(n).append("\",\"time\":").append(time()).append(",\"items\":[");
    for (int k = 0; k < size; k++) {
      json.append(k == 0 ? "" : ",");
      if (size >= 20 && random.nextInt(4) == 0) {
        json.append("{\"id\":\"sku-").append(items.sample(random)).append("\",\"qty\":").append(1 + random.nextInt(3)).append('}');
      } else {
        json.append("\"sku-").append(items.sample(random)).append('"');
      }
    }
    json.append(']');
    if (attributes) {
      json.append(",\"attributes\":{\"channel\":\"").append(CHANNELS[random.nextInt(CHANNELS.length)])
          .append("\",\"region\":\"").append(REGIONS[random.nextInt(REGIONS.length)]).append("\"}");
    }
    if (unknownKey) {
      json.append(",\"customer\":{\"tier\":\"gold\",\"since\":2019,\"tags\":[\"b2c\",null]}");
    }
    return json.append('}').toString();
  }

  private String lineItem(long n) {
    json.setLength(0);
    json.append("{\"basket\":\"o-").append(n / 4).append("\",\"time\":").append(time());
    int shape = random.nextInt(10);
    if (shape < 8) {
      json.append(",\"item\":\"sku-").append(items.sample(random)).append('"');
    } else if (shape == 8) {
      json.append(",\"item\":{\"id\":\"sku-").append(items.sample(random)).append("\",\"qty\":2}");
    } else {
      json.append(",\"end\":true");
    }
    return json.append('}').toString();
  }

  private Record cloudEvent(long n) {
    String data = basket(n, 1 + poisson(3), false, false);
    String type = "org.pairpulse.basket.v1";
    if (random.nextBoolean()) {
      String envelope = "{\"specversion\":\"1.0\",\"id\":\"ev-" + n + "\",\"source\":\"/shop/eu\",\"type\":\"" + type
          + "\",\"time\":\"" + Instant.ofEpochMilli(nowMillis - 60_000) + "\",\"datacontenttype\":\"application/json\","
          + "\"data\":" + data + "}";
      RecordHeaders headers = new RecordHeaders();
      headers.add("content-type", "application/cloudevents+json; charset=UTF-8".getBytes(StandardCharsets.UTF_8));
      return new Record(envelope.getBytes(StandardCharsets.UTF_8), headers, Kind.CLOUD_EVENT);
    }
    Map<String, String> attributes = new LinkedHashMap<>();
    attributes.put("ce_specversion", "1.0");
    attributes.put("ce_id", "ev-" + n);
    attributes.put("ce_source", "/shop/eu");
    attributes.put("ce_type", type);
    attributes.put("content-type", "application/json");
    RecordHeaders headers = new RecordHeaders();
    attributes.forEach((key, value) -> headers.add(key, value.getBytes(StandardCharsets.UTF_8)));
    return new Record(data.getBytes(StandardCharsets.UTF_8), headers, Kind.CLOUD_EVENT);
  }

  private String invalid(long n) {
    String good = basket(n, 1 + poisson(3), false, false);
    return switch ((int) (n % 6)) {
      case 0 -> good.substring(0, good.length() / 2);
      case 1 -> good.replace("\"items\"", "\"itemz\"");
      case 2 -> good.replaceFirst("\"time\":[0-9]+", "\"time\":true");
      case 3 -> "{\"id\":\"o-" + n + "\",\"time\":" + nowMillis + ",\"items\":[]}";
      case 4 -> good.replace("\"id\":\"o-", "\"id\":\"" + "o".repeat(300));
      default -> good.replaceFirst("\"time\":[0-9]+", "\"time\":\"2001-01-01T00:00:00Z\"");
    };
  }

  /** Epoch milliseconds, or (3 in 10) the same instant as an RFC 3339 string. */
  private String time() {
    long millis = nowMillis - random.nextLong(2 * DAY_MILLIS);
    return random.nextInt(10) < 3 ? "\"" + Instant.ofEpochMilli(millis) + "\"" : Long.toString(millis);
  }

  /** Knuth's multiplication method; fine for a small mean. */
  private int poisson(double mean) {
    double limit = Math.exp(-mean);
    double product = random.nextDouble();
    int k = 0;
    while (product > limit && k < 40) {
      product *= random.nextDouble();
      k++;
    }
    return k;
  }
}
