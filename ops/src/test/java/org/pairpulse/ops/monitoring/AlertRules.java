package org.pairpulse.ops.monitoring;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Reads the Prometheus alert rules file (ops/monitoring/pairpulse-alerts.yml) far enough to check it: each
 * rule's fields and the metric names its expression uses. The file is plain, regular YAML (the shape
 * Prometheus documents); this reader understands only that shape, which is all the checks need.
 */
public final class AlertRules {
  /** Metric names Prometheus makes up itself, not found in a scrape. */
  static final Set<String> SYNTHETIC = Set.of("up", "scrape_duration_seconds", "scrape_samples_scraped");
  private static final Pattern METRIC = Pattern.compile("\\b((?:pairpulse|jvm|process|system)_[a-zA-Z0-9_]+|up)\\b");
  private static final Pattern SAMPLE = Pattern.compile("^([a-zA-Z_:][a-zA-Z0-9_:]*)[ {]");

  private AlertRules() {}

  /** One rule: its alert name and its fields as text (expr joined over lines; labels and annotations flattened). */
  public record Rule(String alert, Map<String, String> fields) {}

  /** The ops module's directory (tests run in it under Maven; from the repository root otherwise). */
  public static Path opsDir() {
    Path here = Path.of("").toAbsolutePath();
    if (Files.isDirectory(here.resolve("monitoring"))) {
      return here;
    }
    return here.resolve("ops");
  }

  public static Path rulesFile() {
    return opsDir().resolve("monitoring/pairpulse-alerts.yml");
  }

  /** The rules of the file, in order. */
  public static List<Rule> rules(Path file) {
    List<String> lines;
    try {
      lines = Files.readAllLines(file, StandardCharsets.UTF_8);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    List<Rule> rules = new ArrayList<>();
    Map<String, String> fields = null;
    String alert = null;
    String section = "";
    String blockKey = null;
    int blockIndent = -1;
    for (String raw : lines) {
      String line = raw.replaceAll("\\s+$", "");
      if (line.isBlank() || line.trim().startsWith("#")) {
        continue;
      }
      int indent = line.length() - line.stripLeading().length();
      String text = line.trim();
      if (blockKey != null) {
        if (indent > blockIndent) {
          fields.merge(blockKey, text, (a, b) -> a + " " + b);
          continue;
        }
        blockKey = null;
      }
      if (text.startsWith("- alert:")) {
        if (alert != null) {
          rules.add(new Rule(alert, fields));
        }
        alert = unquote(text.substring("- alert:".length()));
        fields = new LinkedHashMap<>();
        section = "";
        continue;
      }
      if (alert == null) {
        continue;
      }
      if (text.startsWith("- name:")) { // the next group
        rules.add(new Rule(alert, fields));
        alert = null;
        continue;
      }
      int colon = text.indexOf(':');
      if (colon < 0) {
        continue;
      }
      String key = text.substring(0, colon).trim();
      String value = text.substring(colon + 1).trim();
      if (key.equals("labels") || key.equals("annotations")) {
        section = key + ".";
        continue;
      }
      if (key.equals("expr") || key.equals("for")) {
        section = "";
      }
      if (value.equals("|") || value.equals(">")) {
        blockKey = section + key;
        blockIndent = indent;
        fields.put(blockKey, "");
        continue;
      }
      fields.put(section + key, unquote(value));
    }
    if (alert != null) {
      rules.add(new Rule(alert, fields));
    }
    for (Rule r : rules) {
      r.fields().replaceAll((k, v) -> v.trim());
    }
    return rules;
  }

  /** The metric names the expressions of the file use (Prometheus's synthetic ones left out). */
  public static Set<String> metricNames(Path file) {
    Set<String> names = new TreeSet<>();
    for (Rule rule : rules(file)) {
      Matcher m = METRIC.matcher(rule.fields().getOrDefault("expr", ""));
      while (m.find()) {
        names.add(m.group(1));
      }
    }
    names.removeAll(SYNTHETIC);
    return names;
  }

  /** The sample names of a Prometheus text scrape. */
  public static Set<String> metricNamesIn(String scrape) {
    Set<String> names = new TreeSet<>();
    for (String line : scrape.split("\n")) {
      Matcher m = SAMPLE.matcher(line);
      if (!line.startsWith("#") && m.find()) {
        names.add(m.group(1));
      }
    }
    return names;
  }

  private static String unquote(String value) {
    String v = value.trim();
    if (v.length() >= 2 && (v.startsWith("\"") && v.endsWith("\"") || v.startsWith("'") && v.endsWith("'"))) {
      return v.substring(1, v.length() - 1);
    }
    return v;
  }
}
