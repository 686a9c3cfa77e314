package org.pairpulse.ops.tools.group;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.BufferedReader;
import java.io.InputStreamReader;
import java.net.URI;
import java.net.http.HttpClient;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import java.util.function.BooleanSupplier;
import java.util.function.Supplier;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.product.run.RunConfig;

/**
 * Three instances of {@code run --config} in one consumer group over six partitions, one of them a JVM of its own
 * killed like kill -9 mid-stream and started again, against a one-instance run of the same input (its own group):
 * every instance answers top pairs, rules and suggestions as the one instance does (window counts exactly, decays
 * within 1e-9), its status shows the whole group covered, and the group's alerts topic holds each alert once, in the
 * one instance's order.
 */
class GroupPipelineTest {
  private static final String TOPIC = "grp.baskets";
  private static final long PUBLISH_MS = 500;
  private static final long REFRESH_MS = 200;

  @TempDir
  Path dir;

  @Test
  void threeInstancesAnswerAsOneAndRaiseEachAlertOnce() throws Exception {
    GroupWorkload w = new GroupWorkload(11, 6000, 60, 4, 12, System.currentTimeMillis() - 3_600_000L);
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().property("group.min.session.timeout.ms", "1000")
        .build().start();
        KafkaProducer<byte[], byte[]> producer = producer(broker)) {
      broker.createTopic(TOPIC, 6);
      String bootstrap = broker.bootstrapServers();
      List<Process> children = new ArrayList<>();
      try (Pipeline reference = start(bootstrap, "grp-ref", "ref");
          Pipeline a = start(bootstrap, "grp", "a");
          Pipeline b = start(bootstrap, "grp", "b")) {
        Path cConfig = config(bootstrap, "grp", "c");
        Child c = Child.launch(cConfig, dir.resolve("c-1.log"));
        children.add(c.process);
        int first = w.size() * 2 / 5;
        int second = w.size() * 7 / 10;
        w.produce(producer, TOPIC, 0, first);
        await(Duration.ofSeconds(120), "three instances with two partitions each, and c counting",
            () -> a.ingestor().assignment().size() == 2 && b.ingestor().assignment().size() == 2 && c.handled.get() > 0,
            () -> "a=" + a.ingestor().assignment() + " b=" + b.ingestor().assignment() + " c handled " + c.handled.get()
                + "; c log: " + tail(dir.resolve("c-1.log")));
        c.process.destroyForcibly(); // kill -9: no final checkpoint, an open transaction maybe left behind
        c.process.waitFor(30, TimeUnit.SECONDS);
        w.produce(producer, TOPIC, first, second);
        Child again = Child.launch(cConfig, dir.resolve("c-2.log"));
        children.add(again.process);
        await(Duration.ofSeconds(120), "the restarted instance to serve", () -> again.port.get() > 0,
            () -> tail(dir.resolve("c-2.log")));
        w.produce(producer, TOPIC, second, w.size());

        HttpClient http = HttpClient.newHttpClient();
        List<URI> group = List.of(a.server().uri(), b.server().uri(), URI.create("http://127.0.0.1:" + again.port.get()));
        URI one = reference.server().uri();
        await(Duration.ofSeconds(180), "every instance to serve all " + w.size() + " baskets, the group covered",
            () -> covered(http, one, w.size(), false) && group.stream().allMatch(u -> covered(http, u, w.size(), true)),
            () -> statuses(http, group));
        // same answers: the group view lags by at most a publication interval, so compare until they agree
        Map<String, JsonNode> expected = GroupAnswers.fetch(http, one);
        for (URI instance : group) {
          List<Optional<String>> last = new ArrayList<>(List.of(Optional.of("not compared")));
          await(Duration.ofSeconds(60), "instance " + instance + " to answer as the one instance", () -> {
            last.set(0, GroupAnswers.difference(fetch(http, instance), expected, 1e-9));
            return last.get(0).isEmpty();
          }, () -> last.get(0).orElse(""));
        }
        long leaders = group.stream().filter(u -> status(http, u).path("group").path("alertLeader").asBoolean()).count();
        assertEquals(1, leaders, "one alert leader: " + statuses(http, group));

        // each alert once: the group's topic against the one instance's, once both are quiet
        String ours = "grp.alerts";
        String theirs = "grp-ref.alerts";
        List<AlertTimeline> last = new ArrayList<>(List.of(new AlertTimeline(List.of(), List.of()),
            new AlertTimeline(List.of(), List.of())));
        await(Duration.ofSeconds(60), "the group's alert timeline to equal the one instance's", () -> {
          last.set(0, AlertTimeline.read(bootstrap, ours));
          last.set(1, AlertTimeline.read(bootstrap, theirs));
          return !last.get(1).timeline().isEmpty() && last.get(0).byTrack().equals(last.get(1).byTrack());
        }, () -> "group " + last.get(0).timeline() + "\none instance " + last.get(1).timeline() + "\ndrift there: "
            + get(http, one, "/api/v1/drift"));
        AlertTimeline groupAlerts = last.get(0);
        assertTrue(groupAlerts.idsUnique(), "an alert id twice: " + groupAlerts.ids());
        assertTrue(groupAlerts.timeline().stream().anyMatch(e -> e.contains("emerging.raised")
            && e.contains(GroupWorkload.EMERGING_B) && e.contains(GroupWorkload.EMERGING_A)), groupAlerts.timeline().toString());
        // one evaluator, where the alerts run: baskets newer than every table, sent now, are tested by the leader
        // only (an instance that led before may hold earlier trials; none but the leader adds any now)
        Map<URI, Long> before = new java.util.HashMap<>();
        for (URI instance : group) {
          before.put(instance, status(http, instance).path("evaluation").path("baskets").asLong());
        }
        GroupWorkload later = new GroupWorkload(12, 600, 60, 1, 0, System.currentTimeMillis() + 23 * 3_600_000L);
        later.produce(producer, TOPIC, 0, later.size());
        URI leader = group.stream().filter(u -> status(http, u).path("group").path("alertLeader").asBoolean())
            .findFirst().orElseThrow();
        await(Duration.ofSeconds(60), "the leader to test some of the new baskets",
            () -> status(http, leader).path("evaluation").path("baskets").asLong() > before.get(leader),
            () -> status(http, leader).toString());
        for (URI instance : group) {
          if (!instance.equals(leader)) {
            assertEquals(before.get(instance), status(http, instance).path("evaluation").path("baskets").asLong(),
                "a follower evaluates nothing: " + instance);
          }
        }
      } finally {
        children.forEach(Process::destroyForcibly);
      }
    }
  }

  /** True when the instance's table holds {@code baskets} baskets in baseline (and, in the group, every partition). */
  private static boolean covered(HttpClient http, URI instance, int baskets, boolean inGroup) {
    JsonNode s = status(http, instance);
    double counted = 0;
    for (JsonNode h : s.path("table").path("horizons")) {
      if (h.path("name").asText().equals("baseline")) {
        counted = h.path("baskets").asDouble();
      }
    }
    JsonNode g = s.path("group");
    return counted == baskets && (!inGroup || (g.path("merged").asInt() == 6 && !g.path("partial").asBoolean(true)
        && g.path("oldestContributionAgeMillis").asLong(-1) == 0));
  }

  private static JsonNode status(HttpClient http, URI instance) {
    try {
      return GroupAnswers.get(http, instance, "/api/v1/status");
    } catch (Exception e) {
      throw new IllegalStateException(e);
    }
  }

  private static JsonNode get(HttpClient http, URI instance, String path) {
    try {
      return GroupAnswers.get(http, instance, path);
    } catch (Exception e) {
      throw new IllegalStateException(e);
    }
  }

  private static Map<String, JsonNode> fetch(HttpClient http, URI instance) {
    try {
      return GroupAnswers.fetch(http, instance);
    } catch (Exception e) {
      throw new IllegalStateException(e);
    }
  }

  private static String statuses(HttpClient http, List<URI> instances) {
    StringBuilder out = new StringBuilder();
    for (URI u : instances) {
      JsonNode s = status(http, u);
      out.append(u).append(": group ").append(s.path("group")).append(" horizons ").append(s.path("table").path("horizons"))
          .append('\n');
    }
    return out.toString();
  }

  private Pipeline start(String bootstrap, String group, String instance) throws Exception {
    return Pipeline.start(RunConfig.load(config(bootstrap, group, instance)).pipelineSettings());
  }

  private Path config(String bootstrap, String group, String instance) throws Exception {
    Path file = dir.resolve(group + "-" + instance + ".properties");
    Files.writeString(file, GroupConfigs.properties(bootstrap, TOPIC, group, instance, PUBLISH_MS, REFRESH_MS),
        StandardCharsets.UTF_8);
    return file;
  }

  private static KafkaProducer<byte[], byte[]> producer(EmbeddedKafkaBroker broker) {
    return new KafkaProducer<>(Map.of(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers(),
        ProducerConfig.LINGER_MS_CONFIG, 5), new ByteArraySerializer(), new ByteArraySerializer());
  }

  private static void await(Duration timeout, String what, BooleanSupplier condition, Supplier<String> detail)
      throws InterruptedException {
    long deadline = System.nanoTime() + timeout.toNanos();
    while (!condition.getAsBoolean()) {
      if (System.nanoTime() > deadline) {
        throw new AssertionError("timed out waiting for " + what + ": " + detail.get());
      }
      Thread.sleep(100); // polling the instances
    }
  }

  static String tail(Path log) {
    try {
      List<String> lines = Files.readAllLines(log, StandardCharsets.UTF_8);
      return String.join("\n", lines.subList(Math.max(0, lines.size() - 30), lines.size()));
    } catch (Exception e) {
      return "(no log: " + e + ")";
    }
  }

  /** A child JVM running {@link ChildRun}, with what it reports. */
  private static final class Child {
    final Process process;
    final AtomicLong handled = new AtomicLong();
    final AtomicLong port = new AtomicLong();

    private Child(Process process) {
      this.process = process;
      CompletableFuture.runAsync(() -> {
        try (BufferedReader lines = new BufferedReader(new InputStreamReader(process.getInputStream(),
            StandardCharsets.UTF_8))) {
          String line;
          while ((line = lines.readLine()) != null) {
            if (line.startsWith("at ")) {
              handled.set(Long.parseLong(line.substring(3)));
            } else if (line.startsWith("port ")) {
              port.set(Long.parseLong(line.substring(5)));
            }
          }
        } catch (java.io.IOException e) {
          // killed
        }
      });
    }

    static Child launch(Path config, Path log) throws java.io.IOException {
      return new Child(ChildRun.launch(config, log));
    }
  }
}
