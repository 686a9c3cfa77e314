package org.pairpulse.ops.product.run;

import java.math.BigDecimal;
import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;
import java.util.function.Consumer;
import org.apache.kafka.common.config.ConfigDef;
import org.apache.kafka.common.config.ConfigDef.ConfigKey;
import org.apache.kafka.common.config.ConfigException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The definitions of several parts (ingest, engine, serve, run, ...; each a Kafka {@link ConfigDef}) composed into
 * one file's namespace: each key is defined once, by its part, and a file that configures several parts is read
 * and checked with the same definitions wherever it is read ({@code pairpulse run}, a backtest).
 *
 * <p>Each part also lists its keys' earlier spellings; {@link #rename} reads them as aliases, with a deprecation
 * warning (logged, and handed to the reader to print) that names the new key.
 */
public final class ConfigParts {
  private static final Logger LOG = LoggerFactory.getLogger(ConfigParts.class);

  /**
   * One part's keys.
   *
   * @param name names the part in {@code --print-config}
   * @param definition its keys
   * @param renamed earlier spellings, each to its key
   */
  public record Part(String name, ConfigDef definition, Map<String, String> renamed) {
    /** A part of the keys of {@code definitions} together (defined in the order given). */
    public static Part of(String name, Map<String, String> renamed, ConfigDef... definitions) {
      ConfigDef all = new ConfigDef();
      for (ConfigDef definition : definitions) {
        definition.configKeys().values().forEach(all::define);
      }
      return new Part(name, all, renamed);
    }

    /** This part without {@code key}. */
    public Part without(String key) {
      ConfigDef rest = new ConfigDef();
      definition.configKeys().values().stream().filter(k -> !k.name.equals(key)).forEach(rest::define);
      Map<String, String> renames = new LinkedHashMap<>(renamed);
      renames.values().removeIf(key::equals);
      return new Part(name, rest, renames);
    }
  }

  private final List<Part> parts;
  private final Map<String, ConfigKey> keys = new LinkedHashMap<>();
  private final Map<String, Part> partOf = new LinkedHashMap<>();
  private final Map<String, String> renamed = new LinkedHashMap<>();

  /** The parts in documentation order; a key defined by two parts is an error. */
  public ConfigParts(List<Part> parts) {
    this.parts = List.copyOf(parts);
    for (Part part : parts) {
      for (ConfigKey key : part.definition().configKeys().values()) {
        if (keys.put(key.name, key) != null) {
          throw new IllegalStateException("key defined twice: " + key.name);
        }
        partOf.put(key.name, part);
      }
      renamed.putAll(part.renamed());
    }
  }

  public List<Part> parts() {
    return parts;
  }

  /** Every key, in documentation order. */
  public Collection<ConfigKey> keys() {
    return keys.values();
  }

  /** The key's definition, or null for a key of no part. */
  public ConfigKey key(String name) {
    return keys.get(name);
  }

  /** The part that defines {@code name}, or null. */
  public Part partOf(String name) {
    return partOf.get(name);
  }

  /** Every earlier spelling, each to its key. */
  public Map<String, String> renamed() {
    return renamed;
  }

  /**
   * {@code raw} with every earlier spelling replaced by its key (file order kept otherwise).
   *
   * @param deprecations hears one warning per earlier spelling read (also logged)
   * @param problems hears of a key given in both spellings
   */
  public Map<String, String> rename(Map<String, String> raw, Consumer<String> deprecations, Consumer<String> problems) {
    Map<String, String> out = new LinkedHashMap<>();
    for (Map.Entry<String, String> entry : raw.entrySet()) {
      String name = entry.getKey().trim();
      String now = renamed.get(name);
      if (now == null) {
        out.putIfAbsent(name, entry.getValue());
        continue;
      }
      if (raw.containsKey(now)) {
        problems.accept("'" + name + "' and '" + now + "' are the same key (" + name + " is its deprecated spelling):"
            + " keep '" + now + "' only");
        continue;
      }
      String warning = "key '" + name + "' is deprecated: use '" + now + "'";
      LOG.warn(warning);
      deprecations.accept(warning);
      out.put(now, entry.getValue());
    }
    return out;
  }

  /** The problem of {@code text} as a value of {@code key} (without the key), or null when it is fine. */
  public static String problem(ConfigKey key, String text) {
    try {
      Object parsed = ConfigDef.parseType(key.name, text, key.type);
      if (key.validator != null) {
        key.validator.ensureValid(key.name, parsed);
      }
      return null;
    } catch (ConfigException e) {
      String reason = reason(e, key.name);
      String rule = rule(key);
      return reason.contains(rule) ? reason : reason + " (allowed: " + rule + ")";
    }
  }

  /** "Invalid value x for configuration y: reason" to "reason". */
  static String reason(ConfigException e, String name) {
    String message = e.getMessage() == null ? "invalid" : e.getMessage();
    int at = message.indexOf("configuration " + name);
    if (at >= 0) {
      int colon = message.indexOf(':', at);
      if (colon >= 0 && colon + 1 < message.length()) {
        return message.substring(colon + 1).trim();
      }
    }
    return message;
  }

  /** What a valid value is: the validator's words, or the type's. */
  public static String rule(ConfigKey key) {
    if (key.validator != null) {
      return key.validator.toString();
    }
    return switch (key.type) {
      case BOOLEAN -> "true or false";
      case LIST -> "comma-separated list";
      case INT, LONG, SHORT -> "an integer";
      case DOUBLE -> "a number";
      default -> "any text";
    };
  }

  /** The default as text: null for a required key, doubles in plain notation. */
  public static String defaultText(ConfigKey key) {
    if (!key.hasDefault()) {
      return null;
    }
    if (key.defaultValue instanceof Double d) {
      return BigDecimal.valueOf(d).stripTrailingZeros().toPlainString();
    }
    String text = ConfigDef.convertToString(key.defaultValue, key.type);
    return text == null ? "" : text;
  }

  /** The known key closest to {@code name} (Levenshtein distance, case ignored). */
  public String closest(String name) {
    String best = null;
    int bestDistance = Integer.MAX_VALUE;
    Map<String, String> candidates = new TreeMap<>();
    keys.keySet().forEach(k -> candidates.put(k, k));
    candidates.putAll(renamed);
    for (Map.Entry<String, String> candidate : candidates.entrySet()) {
      int d = distance(name.toLowerCase(Locale.ROOT), candidate.getKey().toLowerCase(Locale.ROOT));
      if (d < bestDistance) {
        bestDistance = d;
        best = candidate.getValue();
      }
    }
    return best;
  }

  /** Levenshtein distance. */
  static int distance(String a, String b) {
    int[] previous = new int[b.length() + 1];
    int[] current = new int[b.length() + 1];
    for (int j = 0; j <= b.length(); j++) {
      previous[j] = j;
    }
    for (int i = 1; i <= a.length(); i++) {
      current[0] = i;
      for (int j = 1; j <= b.length(); j++) {
        int cost = a.charAt(i - 1) == b.charAt(j - 1) ? 0 : 1;
        current[j] = Math.min(Math.min(current[j - 1] + 1, previous[j] + 1), previous[j - 1] + cost);
      }
      int[] swap = previous;
      previous = current;
      current = swap;
    }
    return previous[b.length()];
  }

  /** The documentation's key table (Markdown): key, type, default, allowed, meaning. */
  public static String markdownTable(Collection<ConfigKey> keys) {
    StringBuilder out = new StringBuilder();
    out.append("| key | type | default | allowed | meaning |\n| --- | --- | --- | --- | --- |\n");
    for (ConfigKey key : keys) {
      String defaultValue = defaultText(key);
      out.append("| `").append(key.name).append("` | ").append(key.type.name().toLowerCase(Locale.ROOT)).append(" | ")
          .append(defaultValue == null ? "(required)" : defaultValue.isEmpty() ? "(empty)" : "`" + defaultValue + "`")
          .append(" | ").append(cell(rule(key))).append(" | ").append(cell(key.documentation)).append(" |\n");
    }
    return out.toString();
  }

  /** The renaming table (Markdown): earlier spelling, key. */
  public static String renamingTable(Map<String, String> renamed) {
    StringBuilder out = new StringBuilder("| earlier spelling (deprecated) | key |\n| --- | --- |\n");
    new TreeMap<>(renamed).forEach((old, now) -> out.append("| `").append(old).append("` | `").append(now)
        .append("` |\n"));
    return out.toString();
  }

  private static String cell(String text) {
    return text.replace("|", "\\|").replace("\n", " ");
  }

  /** Every key of this composition, as {@link #markdownTable(Collection)}. */
  public String markdownTable() {
    return markdownTable(new ArrayList<>(keys.values()));
  }
}
