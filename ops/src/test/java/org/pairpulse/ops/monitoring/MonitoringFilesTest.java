package org.pairpulse.ops.monitoring;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/**
 * The operations files are complete and consistent: every alert rule has its fields and a runbook section that
 * exists; the metric names are Prometheus names of ours; the scrape configs point at /metrics and load the rules.
 * (That every metric name is in a real scrape is checked by the demo's end-to-end test, which has one.)
 */
class MonitoringFilesTest {
  private static final Path OPS = AlertRules.opsDir();

  @Test
  void everyRuleHasItsFieldsAndARunbookSection() throws IOException {
    List<AlertRules.Rule> rules = AlertRules.rules(AlertRules.rulesFile());
    assertTrue(rules.size() >= 12, "rules: " + rules.size());
    Set<String> anchors = runbookAnchors();
    Set<String> names = new HashSet<>();
    for (AlertRules.Rule rule : rules) {
      assertTrue(rule.alert().matches("Pairpulse[A-Z][A-Za-z0-9]+"), rule.alert());
      assertTrue(names.add(rule.alert()), "duplicate alert " + rule.alert());
      assertFalse(rule.fields().getOrDefault("expr", "").isBlank(), rule.alert() + " has no expr");
      assertTrue(Set.of("page", "warning").contains(rule.fields().get("labels.severity")),
          rule.alert() + " severity " + rule.fields().get("labels.severity"));
      assertFalse(rule.fields().getOrDefault("annotations.summary", "").isBlank(), rule.alert() + " has no summary");
      String runbook = rule.fields().getOrDefault("annotations.runbook", "");
      String anchor = rule.alert().toLowerCase(Locale.ROOT);
      assertEquals("ops/RUNBOOK.md#" + anchor, runbook, rule.alert());
      assertTrue(anchors.contains(anchor), "RUNBOOK.md has no section '" + rule.alert() + "'");
    }
  }

  @Test
  void expressionsUseOurMetricNamesInPrometheusForm() {
    Set<String> names = AlertRules.metricNames(AlertRules.rulesFile());
    assertTrue(names.contains("pairpulse_ingest_lag_records"), names.toString());
    for (String name : names) {
      assertFalse(name.contains("."), name);
      if (name.startsWith("pairpulse_") && name.contains("_total")) {
        assertTrue(name.endsWith("_total"), "counter suffix in the middle: " + name);
      }
    }
  }

  @Test
  void scrapeConfigsPointAtMetricsAndLoadTheRules() throws IOException {
    for (String file : List.of("monitoring/prometheus.yml", "monitoring/prometheus-kubernetes.yml")) {
      String text = Files.readString(OPS.resolve(file), StandardCharsets.UTF_8);
      assertTrue(text.contains("metrics_path: /metrics"), file);
      assertTrue(text.contains("- pairpulse-alerts.yml"), file);
    }
    String k8s = Files.readString(OPS.resolve("deploy/kubernetes/pairpulse-group.yaml"), StandardCharsets.UTF_8);
    assertTrue(k8s.contains("app.kubernetes.io/name: pairpulse"), "the pod label the Kubernetes scrape job keeps");
    assertTrue(k8s.contains("name: http"), "the container port the Kubernetes scrape job keeps");
  }

  /** GitHub-style anchors of the runbook's headings. */
  static Set<String> runbookAnchors() throws IOException {
    Set<String> anchors = new HashSet<>();
    Pattern heading = Pattern.compile("^#{1,6}\\s+(.*)$");
    for (String line : Files.readAllLines(OPS.resolve("RUNBOOK.md"), StandardCharsets.UTF_8)) {
      Matcher m = heading.matcher(line);
      if (m.matches()) {
        anchors.add(m.group(1).trim().toLowerCase(Locale.ROOT).replaceAll("[^a-z0-9 _-]", "").replace(' ', '-'));
      }
    }
    return anchors;
  }
}
