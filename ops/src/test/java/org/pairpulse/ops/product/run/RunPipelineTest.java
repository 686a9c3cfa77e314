package org.pairpulse.ops.product.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.HashMap;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ops.product.pipeline.Pipeline;

/**
 * What {@code pairpulse run} starts, from a configuration file, against a real (in-process) broker: the
 * server answers health at once and readiness after the first table, ingest counts every basket, the
 * alerts topic is created, close() leaves a local checkpoint behind, and the file's cohort floor reaches
 * the server (a floor above every count publishes nothing).
 */
class RunPipelineTest {
  private static final ObjectMapper JSON = new ObjectMapper();

  @TempDir
  Path dir;

  @Test
  void aConfigurationFileStartsIngestAndTheServer() throws Exception {
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      broker.createTopic("shop.baskets", 2);
      Path checkpoints = dir.resolve("checkpoints");
      Path file = dir.resolve("pairpulse.properties");
      Files.writeString(file, String.join("\n",
          "bootstrap.servers=" + broker.bootstrapServers(),
          "topics=shop.baskets",
          "group.id=run-test",
          "instance.id=run-test-1",
          "checkpoint.store=local",
          "checkpoint.dir=" + checkpoints,
          "refresh.interval.ms=200",
          "serve.port=0",
          "serve.cohort.floor=10",
          "alerts.kafka.topic=run-test.alerts",
          "kafka.client.dns.lookup=use_all_dns_ips",
          "run.sketch.health.interval.ms=1000", ""), StandardCharsets.UTF_8);
      RunConfig config = RunConfig.load(file);
      int baskets = 300;
      try (Pipeline pipeline = Pipeline.start(config.pipelineSettings())) {
        HttpClient http = HttpClient.newHttpClient();
        URI base = pipeline.server().uri();
        assertEquals(200, status(http, base.resolve("/api/v1/health")));
        produce(broker.bootstrapServers(), baskets);
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
        JsonNode status = null;
        while (System.nanoTime() < deadline) {
          status = JSON.readTree(http.send(HttpRequest.newBuilder(base.resolve("/api/v1/status")).build(),
              HttpResponse.BodyHandlers.ofString()).body());
          // counted, and a table published after that (ready alone: a table, maybe published before the baskets)
          if (status.path("ingest").path("basketsTotal").asLong() == baskets
              && status.path("table").path("horizons").path(1).path("baskets").asLong() == baskets) {
            break;
          }
          Thread.sleep(100); // waiting for ingest and a refresh
        }
        assertTrue(status != null && status.path("ready").asBoolean(), String.valueOf(status));
        assertEquals(baskets, status.path("ingest").path("basketsTotal").asLong(), status.toString());
        assertEquals("running", status.path("ingest").path("state").asText(), status.toString());
        assertEquals(200, status(http, base.resolve("/api/v1/health/ready")));
        JsonNode rules = JSON.readTree(http.send(HttpRequest.newBuilder(
            base.resolve("/api/v1/rules?item=fibre-1g&horizon=day")).build(), HttpResponse.BodyHandlers.ofString()).body());
        JsonNode first = rules.path("outgoing").get(0);
        assertEquals("router-rental", first == null ? null : first.path("consequent").asText(), rules.toString());
        try (Admin admin = broker.admin()) {
          assertTrue(admin.listTopics().names().get(30, TimeUnit.SECONDS).contains("run-test.alerts"));
        }
      }
      try (Stream<Path> files = Files.list(checkpoints)) {
        assertTrue(files.anyMatch(p -> p.getFileName().toString().startsWith("shop.baskets-")), "no checkpoint file");
      }

      // the file's cohort floor reaches the server: above every count, nothing is published
      Files.writeString(file, Files.readString(file, StandardCharsets.UTF_8).replace("serve.cohort.floor=10",
          "serve.cohort.floor=1000").replace("group.id=run-test", "group.id=run-test-floor")
          .replace("checkpoint.store=local", "checkpoint.store=none"), StandardCharsets.UTF_8);
      try (Pipeline pipeline = Pipeline.start(RunConfig.load(file).pipelineSettings())) {
        HttpClient http = HttpClient.newHttpClient();
        URI base = pipeline.server().uri();
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
        while (System.nanoTime() < deadline && pipeline.server().view("all").table().horizon("day")
            .map(h -> h.baskets()).orElse(0.0) < baskets) {
          Thread.sleep(100); // waiting for a table of every basket
        }
        pipeline.server().catchUp();
        JsonNode status = JSON.readTree(http.send(HttpRequest.newBuilder(base.resolve("/api/v1/status")).build(),
            HttpResponse.BodyHandlers.ofString()).body());
        assertEquals(1000.0, status.path("serving").path("cohortFloor").asDouble(), status.toString());
        assertEquals(0, status.path("table").path("publishedPairs").asInt(), status.toString());
        assertTrue(status.path("table").path("suppressedPairs").asInt() > 0, status.toString());
        JsonNode rules = JSON.readTree(http.send(HttpRequest.newBuilder(
            base.resolve("/api/v1/rules?item=fibre-1g&horizon=day")).build(), HttpResponse.BodyHandlers.ofString()).body());
        assertEquals(0, rules.path("outgoing").size(), rules.toString());
        assertEquals(0, pipeline.server().alertHistory().size(), "no alert about pairs under the floor");
      }
    }
  }

  private static int status(HttpClient http, URI uri) throws Exception {
    return http.send(HttpRequest.newBuilder(uri).timeout(Duration.ofSeconds(10)).build(),
        HttpResponse.BodyHandlers.discarding()).statusCode();
  }

  /** Half the baskets a fibre plan with its router, half a TV plan, each with one of 7 other items. */
  private static void produce(String bootstrap, int baskets) {
    Map<String, Object> props = new HashMap<>();
    props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
    long now = System.currentTimeMillis();
    try (KafkaProducer<String, String> producer = new KafkaProducer<>(props, new StringSerializer(), new StringSerializer())) {
      for (int i = 0; i < baskets; i++) {
        String id = "b-" + i;
        String other = "item-" + (i % 7);
        String value = "{\"id\":\"" + id + "\",\"time\":" + (now - (baskets - i) * 1000L)
            + ",\"items\":[" + (i % 2 == 0 ? "\"fibre-1g\",\"router-rental\"" : "\"tv-basic\"") + ",\"" + other + "\"]}";
        producer.send(new ProducerRecord<>("shop.baskets", id, value));
      }
      producer.flush();
    }
  }
}
