package org.pairpulse.ops.tools.group;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;

/**
 * The answers the group checks compare: top pairs per horizon, rules and suggestions, fetched over HTTP from an
 * instance, and the first difference between two instances' answers. Fields that name the instance's own table
 * (its version, publication time, age, the clock) are left out; numbers must agree within a relative tolerance
 * (window counts add exactly; decayed sums may differ in the last bits when merged in another order).
 */
public final class GroupAnswers {
  private static final ObjectMapper JSON = new ObjectMapper();
  private static final Set<String> OWN_FIELDS = Set.of("tableVersion", "version", "publishedAtMillis", "ageMillis",
      "nowMillis");

  /** The requests compared: every horizon's top pairs, rules and suggestions of common and emerging items. */
  public static final List<String> QUERIES = List.of(
      "/api/v1/pairs/top?horizon=day&count=40",
      "/api/v1/pairs/top?horizon=recent&count=40",
      "/api/v1/pairs/top?horizon=baseline&count=40",
      "/api/v1/rules?item=item-000&horizon=day&count=20",
      "/api/v1/rules?item=" + GroupWorkload.EMERGING_A + "&horizon=recent&count=20",
      "/api/v1/suggestions?items=item-001,item-002&horizon=day&count=10",
      "/api/v1/suggestions?items=" + GroupWorkload.EMERGING_B + "&horizon=recent&count=10");

  private GroupAnswers() {}

  /** Every query's answer from the instance at {@code base}. */
  public static Map<String, JsonNode> fetch(HttpClient http, URI base) throws IOException, InterruptedException {
    Map<String, JsonNode> out = new LinkedHashMap<>();
    for (String query : QUERIES) {
      HttpResponse<String> response = http.send(HttpRequest.newBuilder(base.resolve(query))
          .timeout(Duration.ofSeconds(20)).build(), HttpResponse.BodyHandlers.ofString());
      out.put(query, JSON.readTree(response.body()));
    }
    return out;
  }

  /** A JSON document from {@code base + path}. */
  public static JsonNode get(HttpClient http, URI base, String path) throws IOException, InterruptedException {
    return JSON.readTree(http.send(HttpRequest.newBuilder(base.resolve(path)).timeout(Duration.ofSeconds(20)).build(),
        HttpResponse.BodyHandlers.ofString()).body());
  }

  /** The first difference between two instances' answers, or empty when they agree. */
  public static Optional<String> difference(Map<String, JsonNode> a, Map<String, JsonNode> b, double relTolerance) {
    for (String query : QUERIES) {
      Optional<String> d = difference(query, a.get(query), b.get(query), relTolerance);
      if (d.isPresent()) {
        return d;
      }
    }
    return Optional.empty();
  }

  static Optional<String> difference(String path, JsonNode a, JsonNode b, double relTolerance) {
    if (a == null || b == null) {
      return a == b ? Optional.empty() : Optional.of(path + ": " + a + " vs " + b);
    }
    if (a.isNumber() && b.isNumber()) {
      double x = a.asDouble();
      double y = b.asDouble();
      boolean close = x == y || Math.abs(x - y) <= relTolerance * Math.max(Math.abs(x), Math.abs(y));
      return close ? Optional.empty() : Optional.of(path + ": " + x + " vs " + y);
    }
    if (a.isObject() && b.isObject()) {
      Iterator<String> names = a.fieldNames();
      while (names.hasNext()) {
        String name = names.next();
        if (OWN_FIELDS.contains(name)) {
          continue;
        }
        Optional<String> d = difference(path + "." + name, a.get(name), b.get(name), relTolerance);
        if (d.isPresent()) {
          return d;
        }
      }
      Iterator<String> others = b.fieldNames();
      while (others.hasNext()) {
        String name = others.next();
        if (!OWN_FIELDS.contains(name) && !a.has(name)) {
          return Optional.of(path + "." + name + ": missing on the left");
        }
      }
      return Optional.empty();
    }
    if (a.isArray() && b.isArray()) {
      if (a.size() != b.size()) {
        return Optional.of(path + ": " + a.size() + " vs " + b.size() + " entries");
      }
      for (int i = 0; i < a.size(); i++) {
        Optional<String> d = difference(path + "[" + i + "]", a.get(i), b.get(i), relTolerance);
        if (d.isPresent()) {
          return d;
        }
      }
      return Optional.empty();
    }
    return a.equals(b) ? Optional.empty() : Optional.of(path + ": " + a + " vs " + b);
  }
}
