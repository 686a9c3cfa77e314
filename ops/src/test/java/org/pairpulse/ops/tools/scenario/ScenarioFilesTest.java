package org.pairpulse.ops.tools.scenario;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.StringWriter;
import java.math.BigDecimal;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The files parse back, with trivial readers written here, into exactly what was generated. */
class ScenarioFilesTest {
  static final ScenarioConfig SMALL = ScenarioConfig.defaults().withDurationDays(1).withBasketsPerMinute(2);

  @Test
  void csvRoundTrips() throws IOException {
    ScenarioGenerator scenario = new ScenarioGenerator(SMALL);
    List<ScenarioBasket> baskets = ScenarioGeneratorTest.list(scenario.iterator());
    StringWriter out = new StringWriter();
    assertEquals(baskets.size(), ScenarioFiles.writeCsv(scenario.iterator(), out));

    String[] lines = out.toString().split("\n", -1);
    assertEquals(ScenarioFiles.CSV_HEADER, lines[0]);
    assertEquals("", lines[lines.length - 1], "ends with a line end");
    List<ScenarioBasket> parsed = new ArrayList<>();
    String id = null;
    long millis = 0;
    List<String> items = new ArrayList<>();
    for (int i = 1; i < lines.length - 1; i++) {
      String[] fields = lines[i].split(",", -1);
      assertEquals(3, fields.length, lines[i]);
      if (!fields[0].equals(id)) {
        if (id != null) {
          parsed.add(new ScenarioBasket(id, millis, items, Map.of()));
        }
        id = fields[0];
        millis = Long.parseLong(fields[1]);
        items = new ArrayList<>();
      }
      assertEquals(millis, Long.parseLong(fields[1]), "one time per basket");
      items.add(fields[2]);
    }
    parsed.add(new ScenarioBasket(id, millis, items, Map.of()));

    assertEquals(baskets.size(), parsed.size());
    for (int b = 0; b < baskets.size(); b++) {
      assertEquals(baskets.get(b).id(), parsed.get(b).id());
      assertEquals(baskets.get(b).eventMillis(), parsed.get(b).eventMillis());
      assertEquals(baskets.get(b).items(), parsed.get(b).items());
    }
  }

  @Test
  void jsonLinesRoundTrip() throws IOException {
    ScenarioGenerator scenario = new ScenarioGenerator(SMALL);
    List<ScenarioBasket> baskets = ScenarioGeneratorTest.list(scenario.iterator());
    StringWriter out = new StringWriter();
    assertEquals(baskets.size(), ScenarioFiles.writeJsonLines(scenario.iterator(), out));
    assertEquals(baskets, parseJsonLines(out.toString()));
  }

  @Test
  void jsonStringsAreEscaped() {
    ScenarioBasket odd = new ScenarioBasket("q\"uote\\back\nline\u0001", 5, List.of("a,b", "é"),
        Map.of("k", "v\t"));
    String line = ScenarioFiles.jsonLine(odd);
    assertEquals("{\"id\":\"q\\\"uote\\\\back\\nline\\u0001\",\"time\":5,\"items\":[\"a,b\",\"é\"],"
        + "\"attributes\":{\"k\":\"v\\t\"}}", line);
    assertEquals(List.of(odd), parseJsonLines(line + "\n"));
  }

  @Test
  void groundTruthJsonRoundTrips() {
    ScenarioGroundTruth truth = new ScenarioGenerator(ScenarioConfig.defaults()).groundTruth();
    Map<?, ?> json = (Map<?, ?>) new Json(truth.toJson()).value();
    assertEquals("kestrel-connect", json.get("scenario"));
    assertEquals(new BigDecimal(truth.config().seed()), json.get("seed"));
    assertEquals("2026-06-01T00:00:00Z", json.get("start"));
    assertEquals(new BigDecimal(truth.config().startMillis()), json.get("startMillis"));
    assertEquals(new BigDecimal(truth.config().endMillis()), json.get("endMillis"));
    assertEquals(new BigDecimal(8), json.get("durationDays"));
    assertEquals(0, new BigDecimal(20).compareTo((BigDecimal) json.get("basketsPerMinute")));
    List<?> planted = (List<?>) json.get("planted");
    assertEquals(truth.planted().size(), planted.size());
    for (int i = 0; i < planted.size(); i++) {
      PlantedPair pair = truth.planted().get(i);
      Map<?, ?> entry = (Map<?, ?>) planted.get(i);
      assertEquals(pair.kind().name(), entry.get("kind"));
      assertEquals(pair.items(), entry.get("items"));
      assertEquals(new BigDecimal(pair.startMillis()), entry.get("startMillis"));
      assertEquals(new BigDecimal(pair.endMillis()), entry.get("endMillis"));
      assertEquals(java.time.Instant.ofEpochMilli(pair.startMillis()).toString(), entry.get("start"));
      assertEquals(java.time.Instant.ofEpochMilli(pair.endMillis()).toString(), entry.get("end"));
      assertEquals(pair.expectedLift(), ((BigDecimal) entry.get("expectedLift")).doubleValue(),
          1e-5 * pair.expectedLift());
      if (Double.isNaN(pair.expectedLiftOutside())) {
        assertNull(entry.get("expectedLiftOutside"));
        assertTrue(entry.containsKey("expectedLiftOutside"));
      } else {
        assertEquals(pair.expectedLiftOutside(), ((BigDecimal) entry.get("expectedLiftOutside")).doubleValue(),
            1e-5 * pair.expectedLiftOutside());
      }
      assertEquals(pair.description(), entry.get("description"));
    }
  }

  @Test
  void writeAllWritesTheSameAsTheSingleWriters(@TempDir Path directory) throws IOException {
    ScenarioGenerator scenario = new ScenarioGenerator(SMALL);
    long baskets = ScenarioFiles.writeAll(scenario, directory.resolve("out"));
    StringWriter csv = new StringWriter();
    StringWriter jsonLines = new StringWriter();
    assertEquals(baskets, ScenarioFiles.writeCsv(scenario.iterator(), csv));
    assertEquals(baskets, ScenarioFiles.writeJsonLines(scenario.iterator(), jsonLines));
    assertEquals(csv.toString(), read(directory.resolve("out").resolve(ScenarioFiles.CSV_FILE)));
    assertEquals(jsonLines.toString(), read(directory.resolve("out").resolve(ScenarioFiles.JSON_LINES_FILE)));
    assertEquals(scenario.groundTruth().toJson(),
        read(directory.resolve("out").resolve(ScenarioFiles.GROUND_TRUTH_FILE)));
  }

  static String read(Path file) throws IOException {
    return new String(Files.readAllBytes(file), StandardCharsets.UTF_8);
  }

  static List<ScenarioBasket> parseJsonLines(String text) {
    List<ScenarioBasket> baskets = new ArrayList<>();
    for (String line : text.split("\n")) {
      Map<?, ?> json = (Map<?, ?>) new Json(line).value();
      assertEquals(List.of("id", "time", "items", "attributes"), new ArrayList<>(json.keySet()));
      List<String> items = new ArrayList<>();
      for (Object item : (List<?>) json.get("items")) {
        items.add((String) item);
      }
      Map<String, String> attributes = new LinkedHashMap<>();
      ((Map<?, ?>) json.get("attributes")).forEach((k, v) -> attributes.put((String) k, (String) v));
      baskets.add(new ScenarioBasket((String) json.get("id"),
          ((BigDecimal) json.get("time")).longValueExact(), items, attributes));
    }
    return baskets;
  }

  /**
   * A trivial, strict JSON reader for the tests: objects (keys in order), arrays, strings, numbers as
   * BigDecimal, true, false, null. Fails on anything else, including trailing text.
   */
  static final class Json {
    private final String text;
    private int pos;

    Json(String text) {
      this.text = text;
    }

    Object value() {
      Object value = read();
      skipSpace();
      assertEquals(text.length(), pos, "trailing text");
      return value;
    }

    private Object read() {
      skipSpace();
      char c = text.charAt(pos);
      if (c == '{') {
        Map<String, Object> object = new LinkedHashMap<>();
        pos++;
        skipSpace();
        if (text.charAt(pos) == '}') {
          pos++;
          return object;
        }
        while (true) {
          skipSpace();
          String key = string();
          skipSpace();
          expect(':');
          object.put(key, read());
          skipSpace();
          if (text.charAt(pos) == '}') {
            pos++;
            return object;
          }
          expect(',');
        }
      }
      if (c == '[') {
        List<Object> array = new ArrayList<>();
        pos++;
        skipSpace();
        if (text.charAt(pos) == ']') {
          pos++;
          return array;
        }
        while (true) {
          array.add(read());
          skipSpace();
          if (text.charAt(pos) == ']') {
            pos++;
            return array;
          }
          expect(',');
        }
      }
      if (c == '"') {
        return string();
      }
      if (text.startsWith("null", pos)) {
        pos += 4;
        return null;
      }
      if (text.startsWith("true", pos)) {
        pos += 4;
        return Boolean.TRUE;
      }
      if (text.startsWith("false", pos)) {
        pos += 5;
        return Boolean.FALSE;
      }
      int start = pos;
      while (pos < text.length() && "+-0123456789.eE".indexOf(text.charAt(pos)) >= 0) {
        pos++;
      }
      return new BigDecimal(text.substring(start, pos));
    }

    private String string() {
      expect('"');
      StringBuilder out = new StringBuilder();
      while (true) {
        char c = text.charAt(pos++);
        if (c == '"') {
          return out.toString();
        }
        assertTrue(c >= 0x20, "raw control character in a string");
        if (c != '\\') {
          out.append(c);
          continue;
        }
        char e = text.charAt(pos++);
        switch (e) {
          case '"': case '\\': case '/': out.append(e); break;
          case 'n': out.append('\n'); break;
          case 'r': out.append('\r'); break;
          case 't': out.append('\t'); break;
          case 'b': out.append('\b'); break;
          case 'f': out.append('\f'); break;
          case 'u':
            out.append((char) Integer.parseInt(text.substring(pos, pos + 4), 16));
            pos += 4;
            break;
          default:
            throw new AssertionError("bad escape \\" + e);
        }
      }
    }

    private void expect(char c) {
      assertEquals(c, text.charAt(pos), "at " + pos);
      pos++;
    }

    private void skipSpace() {
      while (pos < text.length() && Character.isWhitespace(text.charAt(pos))) {
        pos++;
      }
    }
  }
}
