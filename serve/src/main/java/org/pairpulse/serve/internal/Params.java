package org.pairpulse.serve.internal;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import io.javalin.http.Context;
import java.io.IOException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.TreeSet;
import org.pairpulse.serve.wire.Json;

/**
 * A request's parameters, from the query string or a JSON body, checked against the names an
 * endpoint knows: an unknown or repeated parameter is a 400 (a typo such as {@code minconfidence}
 * would otherwise be silently ignored).
 */
final class Params {
  private final Map<String, List<String>> values;

  private Params(Map<String, List<String>> values) {
    this.values = values;
  }

  /** The query string's parameters; {@code multi} names may repeat. */
  static Params query(Context ctx, Set<String> allowed, Set<String> multi) {
    Map<String, List<String>> raw;
    try {
      raw = ctx.queryParamMap();
    } catch (IllegalArgumentException e) {
      throw ApiException.badRequest("malformed query string");
    }
    return checked(raw, allowed, multi);
  }

  /** The members of a JSON object body; {@code arrays} names hold arrays of strings, the rest scalars. */
  static Params json(byte[] body, Set<String> allowed, Set<String> arrays) {
    JsonNode root;
    try {
      root = Json.mapper().readTree(body);
    } catch (JsonProcessingException e) {
      throw ApiException.badRequest("malformed JSON: " + shorten(e.getOriginalMessage()));
    } catch (IOException e) {
      throw ApiException.badRequest("unreadable body");
    }
    if (root == null || !root.isObject()) {
      throw ApiException.badRequest("the body must be a JSON object");
    }
    Map<String, List<String>> raw = new LinkedHashMap<>();
    for (Map.Entry<String, JsonNode> field : root.properties()) {
      String name = field.getKey();
      JsonNode node = field.getValue();
      List<String> list = new ArrayList<>();
      if (arrays.contains(name)) {
        if (!node.isArray()) {
          throw ApiException.badRequest("'" + name + "' must be an array of strings");
        }
        for (JsonNode element : node) {
          if (!element.isTextual()) {
            throw ApiException.badRequest("'" + name + "' must be an array of strings");
          }
          list.add(element.textValue());
        }
      } else if (node.isValueNode() && !node.isNull()) {
        list.add(node.asText());
      } else if (!node.isNull()) {
        throw ApiException.badRequest("'" + name + "' must be a string, number or boolean");
      }
      if (!list.isEmpty() || arrays.contains(name)) {
        raw.put(name, list);
      }
    }
    return checked(raw, allowed, arrays);
  }

  private static Params checked(Map<String, List<String>> raw, Set<String> allowed, Set<String> multi) {
    for (Map.Entry<String, List<String>> entry : raw.entrySet()) {
      String name = entry.getKey();
      if (!allowed.contains(name)) {
        throw ApiException.badRequest("unknown parameter '" + shorten(name) + "'; known: "
            + String.join(", ", new TreeSet<>(allowed)));
      }
      if (entry.getValue().size() > 1 && !multi.contains(name)) {
        throw ApiException.badRequest("parameter '" + name + "' given more than once");
      }
    }
    return new Params(raw);
  }

  static String shorten(String text) {
    if (text == null) {
      return "";
    }
    String clean = text.replaceAll("\\p{Cntrl}", " ");
    return clean.length() <= 120 ? clean : clean.substring(0, 120) + "…";
  }

  Optional<String> one(String name) {
    List<String> list = values.get(name);
    return list == null || list.isEmpty() ? Optional.empty() : Optional.of(list.get(0));
  }

  String required(String name) {
    return one(name).orElseThrow(() -> ApiException.badRequest("missing parameter '" + name + "'"));
  }

  boolean has(String name) {
    return values.containsKey(name);
  }

  List<String> all(String name) {
    return values.getOrDefault(name, List.of());
  }

  int integer(String name, int defaultValue, int min, int max) {
    Optional<String> text = one(name);
    if (text.isEmpty()) {
      return defaultValue;
    }
    try {
      int value = Integer.parseInt(text.get().trim());
      if (value < min || value > max) {
        throw ApiException.badRequest("'" + name + "' must be in " + min + ".." + max + ", got " + value);
      }
      return value;
    } catch (NumberFormatException e) {
      throw ApiException.badRequest("'" + name + "' must be an integer, got '" + shorten(text.get()) + "'");
    }
  }

  double fraction(String name, double defaultValue) {
    Optional<String> text = one(name);
    if (text.isEmpty()) {
      return defaultValue;
    }
    try {
      double value = Double.parseDouble(text.get().trim());
      if (!(value >= 0 && value <= 1)) {
        throw ApiException.badRequest("'" + name + "' must be a number in [0, 1], got '" + shorten(text.get()) + "'");
      }
      return value;
    } catch (NumberFormatException e) {
      throw ApiException.badRequest("'" + name + "' must be a number in [0, 1], got '" + shorten(text.get()) + "'");
    }
  }

  boolean bool(String name, boolean defaultValue) {
    Optional<String> text = one(name);
    if (text.isEmpty()) {
      return defaultValue;
    }
    return switch (text.get().trim()) {
      case "true" -> true;
      case "false" -> false;
      default -> throw ApiException.badRequest("'" + name + "' must be true or false, got '" + shorten(text.get()) + "'");
    };
  }
}
