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
 * from a configuration file. In group mode (state-topic checkpoints, the group view and the group's alert leadership
 * on) it is still one: the group's consumer reads the state topic and the alert-state topic beside the basket topics
 * (every member gets every partition of them, {@code SharedTopicsAssignor}), and the checkpoint restores, the group
 * view and the alert take-over are fed from its poll loop ({@code StateTap}, {@code CommittedKey}).
 */
class OneConsumerTest {
  private static final String TOPIC = "one.consumer.baskets";
  private static final String STATE_TOPIC = "one.consumer.state";

  @TempDir
  Path dir;

  @Test
  void anInstanceOfRunOpensOneConsumerWithTheLiveEvaluationOn() throws Exception {
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      List<String> opened = runAndCountConsumers(broker, List.of(
          IngestConfig.CHECKPOINT_STORE + "=local",
          IngestConfig.CHECKPOINT_DIR + "=" + dir.resolve("checkpoints")), 1, pipeline -> { });
      assertEquals(1, opened.size(), "consumers opened by one instance of run: " + opened);
    }
  }

  @Test
  void inGroupModeTheRestoresTheGroupViewAndTheAlertTakeOverReadThroughTheGroupConsumer() throws Exception {
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      List<String> opened = runAndCountConsumers(broker, List.of(
          IngestConfig.CHECKPOINT_STORE + "=kafka",
          IngestConfig.STATE_TOPIC + "=" + STATE_TOPIC,
          IngestConfig.GROUP_VIEW + "=true"), 1, pipeline -> {
            // the leader took over the group's alerts: it opened its transactional producer, then read the alert state
            ObjectName alertsProducer = new ObjectName("kafka.producer:type=app-info,id=pairpulse-alerts");
            waitFor(() -> ManagementFactory.getPlatformMBeanServer().isRegistered(alertsProducer),
                "the take-over of the group's alerts");
            Thread.sleep(1000); // its read of the alert state follows the producer's start
          });
      assertEquals(1, opened.size(), "consumers opened by one instance of run in group mode (the group's consumer, "
          + "which reads the state topics too): " + opened);
      assertTrue(opened.get(0).matches("pairpulse-[0-9a-f]{8}"), "the group's consumer (client id pairpulse-<instance>), "
          + "no reader of a role of its own: " + opened);
    }
  }

  /**
   * Runs one instance of {@code run} with the live evaluation on over 400 baskets, then {@code during}; returns the
   * client ids of every consumer it opened over its life, and checks that {@code expectedLive} were open at once.
   */
  private List<String> runAndCountConsumers(EmbeddedKafkaBroker broker, List<String> modeLines, int expectedLive,
      Phase during) throws Exception {
    broker.createTopic(TOPIC, 2);
    Path file = dir.resolve("pairpulse.properties");
    List<String> lines = new ArrayList<>(List.of(
        IngestConfig.BOOTSTRAP_SERVERS + "=" + broker.bootstrapServers(),
        IngestConfig.TOPICS + "=" + TOPIC,
        IngestConfig.GROUP_ID + "=one-consumer",
        IngestConfig.REFRESH_INTERVAL_MS + "=200",
        "serve.port=0",
        "serve.cohort.floor=0",
        org.pairpulse.ops.product.evaluation.EvaluationKeys.SHARE + "=0.5"));
    lines.addAll(modeLines);
    Files.writeString(file, String.join("\n", lines) + "\n", StandardCharsets.UTF_8);
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
        during.run(pipeline);
        trials = evaluation.trials();
        assertNull(evaluation.failure());
        assertEquals(expectedLive, live(mbeans, before), "consumers open while the instance runs: " + opened);
      }
      assertTrue(trials > 0, "the live evaluation tested baskets from ingest's path");
    } finally {
      mbeans.removeNotificationListener(MBeanServerDelegate.DELEGATE_NAME, consumers);
    }
    return List.copyOf(opened);
  }

  /** What the test does while the instance runs. */
  private interface Phase {
    void run(Pipeline pipeline) throws Exception;
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
