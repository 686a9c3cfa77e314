package org.pairpulse.ops.product.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import java.util.Set;
import javax.management.MBeanServer;
import javax.management.MBeanServerDelegate;
import javax.management.MBeanServerNotification;
import javax.management.Notification;
import javax.management.NotificationListener;
import javax.management.ObjectName;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ops.product.live.LiveEvaluation;
import org.pairpulse.ops.product.pipeline.Pipeline;

/**
 * One instance of {@code pairpulse run} reads its basket topics with one {@code KafkaConsumer}, the live evaluation
 * on (it is a tap on ingest's path, not a reader of its own). Every Kafka consumer registers its
 * {@code kafka.consumer:type=app-info,id=<client id>} MBean when it is built (Kafka's {@code AppInfoParser}); the test listens to the platform
 * MBean server's registrations over the instance's whole life (start, ingest, evaluation trials, close), so a
 * consumer opened only briefly is counted too. Single-node mode (local checkpoints), as {@code run} starts it
 * from a configuration file.
 */
class OneConsumerTest {
  private static final String TOPIC = "one.consumer.baskets";

  @TempDir
  Path dir;

  @Test
  void anInstanceOfRunOpensOneConsumerWithTheLiveEvaluationOn() throws Exception {
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      broker.createTopic(TOPIC, 2);
      Path file = dir.resolve("pairpulse.properties");
      Files.writeString(file, String.join("\n",
          IngestConfig.BOOTSTRAP_SERVERS + "=" + broker.bootstrapServers(),
          IngestConfig.TOPICS + "=" + TOPIC,
          IngestConfig.GROUP_ID + "=one-consumer",
          IngestConfig.CHECKPOINT_STORE + "=local",
          IngestConfig.CHECKPOINT_DIR + "=" + dir.resolve("checkpoints"),
          IngestConfig.REFRESH_INTERVAL_MS + "=200",
          "serve.port=0",
          "serve.cohort.floor=0",
          org.pairpulse.ops.product.evaluation.EvaluationKeys.SHARE + "=0.5", ""), StandardCharsets.UTF_8);
      Pipeline.Settings settings = RunConfig.load(file).pipelineSettings();
      assertTrue(settings.evaluation() != null && settings.evaluation().share() == 0.5, "the live evaluation is on");

      List<String> opened = Collections.synchronizedList(new ArrayList<>());
      MBeanServer mbeans = ManagementFactory.getPlatformMBeanServer();
      NotificationListener consumers = (Notification n, Object handback) -> {
        if (n instanceof MBeanServerNotification registration
            && MBeanServerNotification.REGISTRATION_NOTIFICATION.equals(registration.getType())
            && isConsumer(registration.getMBeanName())) {
          opened.add(registration.getMBeanName().getKeyProperty("id"));
        }
      };
      Set<ObjectName> before = mbeans.queryNames(new ObjectName("kafka.consumer:type=app-info,*"), null);
      mbeans.addNotificationListener(MBeanServerDelegate.DELEGATE_NAME, consumers, null, null);
      try {
        long trials;
        try (Pipeline pipeline = Pipeline.start(settings)) {
          LiveEvaluation evaluation = pipeline.evaluation().orElseThrow();
          long now = System.currentTimeMillis();
          produce(broker.bootstrapServers(), 0, 200, now - Duration.ofMinutes(30).toMillis());
          waitFor(() -> pipeline.server().view("all").table().horizon("day").map(h -> h.baskets()).orElse(0.0) >= 200,
              "a table of the first 200 baskets");
          // later baskets than the table's watermark: the tap tests the sampled ones
          produce(broker.bootstrapServers(), 200, 200, now);
          waitFor(() -> pipeline.ingestHealth().basketsTotal() >= 400, "ingest counted 400 baskets");
          trials = evaluation.trials();
          assertNull(evaluation.failure());
          assertEquals(1, live(mbeans, before), "consumers open while the instance runs: " + opened);
        }
        assertTrue(trials > 0, "the live evaluation tested baskets from ingest's path");
      } finally {
        mbeans.removeNotificationListener(MBeanServerDelegate.DELEGATE_NAME, consumers);
      }
      assertEquals(1, opened.size(), "consumers opened by one instance of run: " + opened);
    }
  }

  private static boolean isConsumer(ObjectName name) {
    // AppInfoParser's kafka.consumer:type=app-info,id=<client id>, one per consumer (its metrics reporter also
    // registers the app-info metrics under client-id=<client id>: not counted twice)
    return "kafka.consumer".equals(name.getDomain()) && "app-info".equals(name.getKeyProperty("type"))
        && name.getKeyProperty("id") != null;
  }

  private static long live(MBeanServer mbeans, Set<ObjectName> before) throws Exception {
    return mbeans.queryNames(new ObjectName("kafka.consumer:type=app-info,*"), null).stream()
        .filter(name -> !before.contains(name) && isConsumer(name)).count();
  }

  private static void waitFor(java.util.function.BooleanSupplier condition, String what) throws InterruptedException {
    long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
    while (!condition.getAsBoolean()) {
      assertTrue(System.nanoTime() < deadline, "timed out waiting for " + what);
      Thread.sleep(50);
    }
  }

  /** Baskets {@code from..from+count-1}, one second apart from {@code startMillis}, a plan with its add-on or alone. */
  private static void produce(String bootstrap, int from, int count, long startMillis) {
    try (KafkaProducer<String, String> producer = new KafkaProducer<>(
        Map.of(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap), new StringSerializer(), new StringSerializer())) {
      for (int i = from; i < from + count; i++) {
        String id = "b-" + i;
        String items = i % 2 == 0 ? "\"fibre-1g\",\"router-rental\",\"item-" + i % 5 + "\"" : "\"tv-basic\",\"item-" + i % 5 + "\"";
        String value = "{\"id\":\"" + id + "\",\"time\":" + (startMillis + (i - from) * 1000L) + ",\"items\":[" + items + "]}";
        producer.send(new ProducerRecord<>(TOPIC, id, value));
      }
      producer.flush();
    }
  }
}
