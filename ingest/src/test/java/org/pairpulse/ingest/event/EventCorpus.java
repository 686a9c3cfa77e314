package org.pairpulse.ingest.event;

import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.params.provider.Arguments;

/**
 * The records every JSON reader is held to: valid events of every shape of the contract (README-ingest's examples
 * and seeded random ones), the poison records of {@link EventDecoderTest}, edge cases at each bound, and seeded
 * random mutations of valid records (bytes replaced, JSON punctuation dropped in, truncations). Invented data.
 */
final class EventCorpus {
  /** The records {@link EventDecoderTest} mutates. */
  static final List<String> MUTATION_SEEDS = List.of(
      "{\"id\":\"o-1\",\"time\":\"2026-12-02T10:15:00Z\",\"items\":[\"a\",{\"id\":\"b\",\"qty\":2}],\"attributes\":{\"s\":\"p\"}}",
      "{\"basket\":\"o-9\",\"time\":1796205600000,\"item\":{\"id\":\"tv\",\"qty\":1},\"end\":true}",
      "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"time\":\"2026-12-02T11:00:00Z\","
          + "\"data\":{\"id\":\"x\",\"items\":[\"\\u00e9\"]},\"data_base64\":\"e30=\"}");

  private static final String PUNCTUATION = "{}[]\",:\\0-e.tfn ";
  private static final String T = "1796205600000";

  private EventCorpus() {}

  /** One to three mutations of {@code seed}: a random byte, a cut, or a JSON punctuation byte. */
  static byte[] mutate(String seed, Random random) {
    byte[] bytes = seed.getBytes(StandardCharsets.UTF_8);
    int mutations = 1 + random.nextInt(3);
    for (int m = 0; m < mutations; m++) {
      switch (random.nextInt(3)) {
        case 0 -> bytes[random.nextInt(bytes.length)] = (byte) random.nextInt(256);
        case 1 -> bytes = java.util.Arrays.copyOf(bytes, random.nextInt(bytes.length));
        default -> bytes[random.nextInt(bytes.length)] = (byte) PUNCTUATION.charAt(random.nextInt(PUNCTUATION.length()));
      }
      if (bytes.length == 0) {
        break;
      }
    }
    return bytes;
  }

  /** An id of 1 to 12 chars with quotes, backslashes, a newline, accents, CJK and a pair of surrogates. */
  static String randomId(Random random) {
    String alphabet = "abcXYZ019-_ é\"\\/\u00e9\u4e2d\ud83d\ude00\n";
    StringBuilder out = new StringBuilder();
    int length = 1 + random.nextInt(12);
    while (out.length() < length) {
      int i = random.nextInt(alphabet.length());
      char c = alphabet.charAt(i);
      if (Character.isHighSurrogate(c)) {
        out.append(c).append(alphabet.charAt(i + 1));
      } else if (!Character.isLowSurrogate(c)) {
        out.append(c);
      }
    }
    return out.toString();
  }

  /**
   * Events of every shape: README-ingest's examples, then {@code random} seeded ones (about one line item in nine lacks
   * both its item and an end marker: {@code missing_field}).
   */
  static List<String> valid(int random, long seed) {
    List<String> out = new ArrayList<>(List.of(
        "{\"id\": \"o-1001\", \"time\": \"2026-12-02T10:15:00Z\", \"items\": [\"sim-20gb\", \"roaming-eu\", \"tv-sports\"]}",
        "{\"id\": \"o-1002\", \"time\": 1796206500000,\n \"items\": [\"sim-20gb\", {\"id\": \"handset-case\", \"qty\": 2}],\n"
            + " \"attributes\": {\"segment\": \"prepaid\", \"region\": \"north\"}}",
        "{\"basket\": \"o-2001\", \"time\": \"2026-12-02T10:20:00Z\", \"item\": \"fibre-1g\"}",
        "{\"basket\": \"o-2001\", \"time\": \"2026-12-02T10:20:05Z\", \"item\": {\"id\": \"router-rental\", \"qty\": 1}}",
        "{\"basket\": \"o-2001\", \"time\": \"2026-12-02T10:20:09Z\", \"end\": true}",
        "{\"specversion\": \"1.0\", \"id\": \"ev-77\", \"source\": \"/shop/eu\", \"type\": \"org.pairpulse.basket.v1\",\n"
            + " \"time\": \"2026-12-02T10:15:00Z\", \"datacontenttype\": \"application/json\",\n"
            + " \"data\": {\"id\": \"o-1003\", \"items\": [\"sim-20gb\", \"tv-sports\"]}}",
        "{\"specversion\":\"1.0\",\"id\":\"ev-78\",\"source\":\"/s\",\"type\":\"org.pairpulse.line-item.v1\","
            + "\"time\":\"2026-12-02T10:20:00Z\",\"data\":{\"basket\":\"o-2002\",\"item\":\"fibre-1g\"}}",
        "{\"specversion\":\"1.0\",\"id\":\"ev-1\",\"source\":\"/shop\",\"type\":\"org.pairpulse.basket.v1\","
            + "\"time\":\"2026-12-02T11:00:00Z\",\"data_base64\":\""
            + Base64.getEncoder().encodeToString("{\"id\":\"o-5\",\"items\":[\"a\",\"b\"]}".getBytes(StandardCharsets.UTF_8)) + "\"}",
        "{\"basket\":\"o-7\",\"item\":\"sim-20gb\",\"qty\":1}",
        "{\"id\":\"o-7\",\"items\":[\"sim-20gb\"]}",
        " { \"channel\" : {\"nested\": [1, -2.5e3, true, null, {\"x\": \"y\\u00e9\"}]},"
            + " \"id\":\"o-1\\\"7\", \"time\":\"2026-12-02T10:15:00.250+01:00\","
            + " \"items\":[\"sim-20gb\", {\"qty\": 2, \"id\":\"roaming-\\u00e9u\"}, \"caf\u00e9\", \"sim-20gb\"],"
            + " \"attributes\":{\"segment\":\"prepaid\"} }\n",
        "{\"id\":\"b\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":null}",
        "{\"basket\":\"o-9\",\"time\":" + T + ",\"item\":{\"id\":\"tv-pack\",\"qty\":1},\"qty\":3}",
        "{\"basket\":\"o-9\",\"time\":1796205600001,\"item\":\"x\",\"end\":true}"));
    Random r = new Random(seed);
    for (int n = 0; n < random; n++) {
      out.add(randomEvent(r));
    }
    return out;
  }

  /** A basket or a line item with random ids, item shapes, attributes and unknown keys, written as JSON. */
  private static String randomEvent(Random r) {
    StringBuilder json = new StringBuilder("{");
    if (r.nextInt(4) == 0) {
      json.append("\"extra\":{\"list\":[1,\"two\",3.5e-2,[],{}],\"flag\":false,\"n\":null},");
    }
    String time = r.nextBoolean() ? Long.toString(Long.parseLong(T) - r.nextInt(1_000_000))
        : quote("2026-12-02T" + (10 + r.nextInt(2)) + ":0" + r.nextInt(10) + ":00" + (r.nextBoolean() ? "Z" : ".5+01:00"));
    if (r.nextInt(3) == 0) {
      json.append("\"basket\":").append(quote(randomId(r))).append(",\"time\":").append(time);
      if (r.nextBoolean()) {
        json.append(",\"item\":").append(randomItem(r));
      }
      if (r.nextBoolean()) {
        json.append(",\"end\":").append(r.nextBoolean());
      } else {
        json.append(",\"end\":true");
      }
      if (r.nextInt(4) == 0) {
        json.append(",\"qty\":").append(1 + r.nextInt(3));
      }
    } else {
      json.append("\"id\":").append(quote(randomId(r))).append(", \"time\" : ").append(time).append(",\"items\":[");
      int size = 1 + r.nextInt(8);
      for (int k = 0; k < size; k++) {
        json.append(k > 0 ? ", " : "").append(randomItem(r));
      }
      json.append(']');
      if (r.nextBoolean()) {
        json.append(",\"attributes\":{\"region\":").append(quote(randomId(r))).append(",\"plan\":\"prepaid\"}");
      }
    }
    return json.append('}').toString();
  }

  private static String randomItem(Random r) {
    String id = quote(randomId(r));
    return switch (r.nextInt(3)) {
      case 0 -> "{\"id\":" + id + ",\"qty\":" + (1 + r.nextInt(5)) + "}";
      case 1 -> "{\"qty\":2.5,\"note\":[\"x\"],\"id\":" + id + "}";
      default -> id;
    };
  }

  /** {@code s} as a JSON string: quotes, backslashes and control chars escaped, the rest as is (UTF-8). */
  static String quote(String s) {
    StringBuilder out = new StringBuilder("\"");
    for (int i = 0; i < s.length(); i++) {
      char c = s.charAt(i);
      if (c == '"' || c == '\\') {
        out.append('\\').append(c);
      } else if (c < 0x20) {
        out.append(String.format("\\u%04x", (int) c));
      } else {
        out.append(c);
      }
    }
    return out.append('"').toString();
  }

  /** The poison records of {@link EventDecoderTest}. */
  static List<String> poison() {
    return EventDecoderTest.poison().map(Arguments::get).map(a -> (String) a[0]).toList();
  }

  /** Records at each bound and with each kind of repetition. */
  static List<String> edges() {
    String basket = "\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]";
    List<String> out = new ArrayList<>();
    for (int depth = 62; depth <= 66; depth++) {
      int open = depth - 1; // the value of key x is at depth 1
      out.add("{" + basket + ",\"x\":" + "[".repeat(open) + "]".repeat(open) + "}");
      out.add("{" + basket + ",\"x\":" + "[".repeat(open) + "1" + "]".repeat(open) + "}");
      out.add("{" + basket + ",\"x\":" + "{\"k\":".repeat(open) + "{}" + "}".repeat(open) + "}");
      out.add("{" + basket + ",\"x\":" + "[".repeat(open) + "{}" + "]".repeat(open) + "}");
    }
    for (String time : List.of("9223372036854775807", "-9223372036854775807", "-9223372036854775808", "-0", "0",
        "1e3", "1796205600000.0", "99999999999999999999.5", "\"2026-12-02\"", "null", "{}", "[]", "\"\"")) {
      out.add("{\"id\":\"a\",\"time\":" + time + ",\"items\":[\"a\"]}");
      out.add("{\"basket\":\"a\",\"time\":" + time + ",\"item\":\"x\"}");
    }
    for (String qty : List.of("1e400", "1e-400", "-0.0", "0.5", "1E2", "null", "\"1\"", "true", "[1]", "123456789012345678901234567890")) {
      out.add("{\"id\":\"a\",\"time\":" + T + ",\"items\":[{\"id\":\"x\",\"qty\":" + qty + "}]}");
      out.add("{\"basket\":\"a\",\"time\":" + T + ",\"item\":\"x\",\"qty\":" + qty + "}");
    }
    out.addAll(List.of(
        "{" + basket + ",\"items\":[5],\"items\":[\"b\"]}",
        "{" + basket + ",\"items\":[\"b\"],\"items\":[5]}",
        "{\"id\":5,\"id\":\"b\",\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"id\":\"b\",\"id\":5,\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[{\"id\":5,\"id\":\"x\"}]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[{\"id\":\"x\",\"id\":null}]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[{\"id\":\"y\",\"qty\":0,\"id\":5}]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[{\"i\\u0064\":\"x\"}]}",
        "{\"i\\u0064\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\",5," + "\"x\",".repeat(30) + "\"y\"]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[" + "\"x\",".repeat(20) + "5]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[" + "\"x\",".repeat(19) + "\"" + "y".repeat(65) + "\"]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"" + "y".repeat(65) + "\", 5]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":{\"\":\"v\"}}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":{\"k\":\"" + "v".repeat(65) + "\"}}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":{\"a\":\"1\",\"a\":\"2\",\"a\":\"3\",\"b\":\"4\","
            + "\"c\":\"5\",\"d\":\"6\"}}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":{\"a\":1},\"attributes\":{\"a\":\"1\"}}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":[]}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[],\"attributes\":{\"a\":1}}",
        "{\"basket\":null,\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"basket\":\"a\",\"time\":" + T + ",\"item\":null,\"end\":true}",
        "{\"basket\":\"a\",\"time\":" + T + ",\"item\":null,\"end\":null}",
        "{\"basket\":\"a\",\"time\":" + T + ",\"item\":[\"x\"],\"end\":true}",
        "{\"basket\":\"a\",\"time\":" + T + ",\"item\":{\"qty\":1},\"item\":\"x\"}",
        "{\"basket\":\"a\",\"time\":" + T + ",\"item\":\"x\",\"item\":{\"qty\":1}}",
        "{\"specversion\":null,\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"specversion\":1.0,\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data\":{\"id\":\"x\","
            + "\"items\":[\"a\"]},\"data\":null,\"data_base64\":\"e30=\"}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"time\":" + T + ",\"data\":{}}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"time\":\"2026-12-02T11:00:00Z\","
            + "\"data\":{\"id\":\"x\",\"items\":[\"a\"],\"data\":{\"id\":\"y\"}},\"datacontenttype\":null}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data_base64\":\"%%%\"}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data_base64\":\"\"}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data_base64\":5}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"datacontenttype\":7,\"data\":{}}",
        "{\"specversion\":\"1.0\",\"id\":\"e\",\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"time\":\"x\",\"data\":{}}",
        "{\"specversion\":\"1.0\",\"id\":5,\"source\":\"/s\",\"type\":\"org.pairpulse.basket.v1\",\"data\":{}}",
        "\t\r\n {" + basket + "} \t\r\n",
        "{" + basket + "}{}",
        "{" + basket + "}]",
        "{" + basket + "} \u0000",
        "{\u0000" + basket + "}",
        "{}",
        "{ }",
        "\uFEFF{" + basket + "}",
        // UTF-16: Jackson would detect it by the NULs among the first four bytes
        new String(("{" + basket + "}").getBytes(StandardCharsets.UTF_16LE), StandardCharsets.ISO_8859_1),
        new String(("{" + basket + "}").getBytes(StandardCharsets.UTF_16BE), StandardCharsets.ISO_8859_1),
        " ",
        "\"text\"",
        "{" + basket + ",\"x\":\"\\ud800\"}",
        "{\"id\":\"\\ud800\",\"time\":" + T + ",\"items\":[\"\\udc00x\"]}",
        "{" + basket + ",\"x\":1.}",
        "{" + basket + ",\"x\":-}",
        "{" + basket + ",\"x\":+1}",
        "{" + basket + ",\"x\":.5}",
        "{" + basket + ",\"x\":1e}",
        "{" + basket + ",\"x\":NaN}",
        "{" + basket + ",\"x\":'a'}",
        "{" + basket + ",\"x\":\"\\'\"}",
        "{" + basket + ",\"x\":nul}",
        "{" + basket + ",\"x\":truex}",
        "{" + basket + ",\"x\":1x}",
        "{" + basket + ",\"x\":\"" + "9".repeat(2000) + "\",\"y\":" + "9".repeat(2000) + "}",
        "{" + basket + ",x:1}",
        "{" + basket + ",\"x\":1,}",
        "{" + basket + "/* c */}",
        "{" + basket + ",\"x\":\"\u007f\"}",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]",
        "{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"]}\n{\"id\":\"b\"}"));
    return out;
  }

  /** Byte-level records that are no UTF-8, each with an otherwise valid basket around the bad bytes. */
  static List<byte[]> notUtf8() {
    List<byte[]> out = new ArrayList<>();
    byte[][] bad = {{(byte) 0xC0, (byte) 0x80}, {(byte) 0xC3}, {(byte) 0xE0, (byte) 0x80, (byte) 0xAF},
        {(byte) 0xED, (byte) 0xA0, (byte) 0x80}, {(byte) 0xF5, (byte) 0x80, (byte) 0x80, (byte) 0x80},
        {(byte) 0xF4, (byte) 0x90, (byte) 0x80, (byte) 0x80}, {(byte) 0xFF}, {(byte) 0x80}};
    String[][] around = {{"{\"id\":\"", "\",\"time\":" + T + ",\"items\":[\"a\"]}"},
        {"{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"", "\"]}"},
        {"{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"note\":\"", "\"}"},
        {"{\"time\":" + T + ",\"items\":[\"", "\"]}"},
        {"{\"id\":\"a\",\"time\":" + T + ",\"items\":[\"a\"],\"attributes\":{\"k\":\"", "\"}}"}};
    for (byte[] b : bad) {
      for (String[] a : around) {
        byte[] head = a[0].getBytes(StandardCharsets.UTF_8);
        byte[] tail = a[1].getBytes(StandardCharsets.UTF_8);
        byte[] record = new byte[head.length + b.length + tail.length];
        System.arraycopy(head, 0, record, 0, head.length);
        System.arraycopy(b, 0, record, head.length, b.length);
        System.arraycopy(tail, 0, record, head.length + b.length, tail.length);
        out.add(record);
      }
    }
    return out;
  }
}
