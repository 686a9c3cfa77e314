package org.pairpulse.serve.alerts;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.sun.net.httpserver.HttpServer;
import io.cloudevents.CloudEvent;
import io.cloudevents.core.provider.EventFormatProvider;
import io.cloudevents.jackson.JsonFormat;
import java.io.InputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Properties;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.junit.jupiter.api.Test;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.fixtures.Tables;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import org.pairpulse.sketch.time.ManualClock;

/**
 * Drift to alert to the alerts topic on a real in-process KRaft broker and to a webhook, through the
 * whole server: the pair {x, y} rises from lift 1 to 2.5 between baseline and recent; the alert
 * clock is manual, dwell 15 minutes.
 */
class AlertsEndToEndTest {

  private static PairTable table(long version) {
    return Tables.defaultHorizons().baskets(10_000).item("x", 2000).item("y", 2000).item("z", 2000)
        .pair("x", "y", 400).pair("x", "z", 400).pair("recent", "x", "y", 1000).build(version);
  }

  @Test
  void anEmergingPairReachesTheTopicAndTheWebhookOnce() throws Exception {
    List<byte[]> hooked = new CopyOnWriteArrayList<>();
    HttpServer hook = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    hook.createContext("/alerts", exchange -> {
      try (InputStream in = exchange.getRequestBody()) {
        hooked.add(in.readAllBytes());
      }
      exchange.sendResponseHeaders(202, -1);
      exchange.close();
    });
    hook.start();
    ManualClock alertClock = new ManualClock(1_772_409_600_000L);
    PairTableHolder tables = new PairTableHolder();
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      ServeConfig config = ServeConfig.defaults().with(ServeConfig.PORT, 0).with(ServeConfig.WATCH_MILLIS, 60_000)
          .with(ServeConfig.KAFKA_BOOTSTRAP, broker.bootstrapServers()).with(ServeConfig.KAFKA_TOPIC, "alerts-test")
          .with(ServeConfig.WEBHOOK_URL, "http://127.0.0.1:" + hook.getAddress().getPort() + "/alerts");
      try (ServeServer server = ServeServer.builder().config(config).segment("all", tables).alertClock(alertClock)
          .build().start()) {
        for (long v = 1; v <= 4; v++) { // one table every 10 minutes: pending at 0, 10; raised at 20; held at 30
          tables.publish(table(v));
          server.catchUp();
          alertClock.advance(TimeUnit.MINUTES.toMillis(10));
        }
        server.drainAlerts();
        List<AlertEvent> history = server.alertHistory().newest(null, 10);
        assertEquals(1, history.size());
        AlertEvent raised = history.get(0);
        assertEquals(3, raised.tableVersion());

        List<ConsumerRecord<byte[], byte[]>> records = consume(broker.bootstrapServers(), "alerts-test", 1);
        assertEquals(1, records.size());
        ConsumerRecord<byte[], byte[]> record = records.get(0);
        assertEquals("pairs/x/y", new String(record.key(), StandardCharsets.UTF_8));
        assertEquals(CloudEvents.CONTENT_TYPE, new String(record.headers().lastHeader("content-type").value(),
            StandardCharsets.UTF_8));
        // read back with the CloudEvents reference SDK (cloudevents-json-jackson 4.0.1)
        CloudEvent event = EventFormatProvider.getInstance().resolveFormat(JsonFormat.CONTENT_TYPE)
            .deserialize(record.value());
        assertEquals("1.0", event.getSpecVersion().toString());
        assertEquals(raised.id(), event.getId());
        assertEquals("org.pairpulse.alert.emerging.raised", event.getType());
        assertEquals(raised.atMillis(), event.getTime().toInstant().toEpochMilli());
        assertTrue(new String(event.getData().toBytes(), StandardCharsets.UTF_8).contains("\"recentLift\":2.5"));

        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(20);
        while (hooked.isEmpty() && System.nanoTime() < deadline) {
          Thread.sleep(20);
        }
        assertEquals(1, hooked.size());
        assertEquals(raised.id(), EventFormatProvider.getInstance().resolveFormat(JsonFormat.CONTENT_TYPE)
            .deserialize(hooked.get(0)).getId());
      }
    } finally {
      hook.stop(0);
    }
  }

  private static List<ConsumerRecord<byte[], byte[]>> consume(String bootstrap, String topic, int want) {
    Properties props = new Properties();
    props.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
    props.put(ConsumerConfig.GROUP_ID_CONFIG, "serve-test");
    props.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
    List<ConsumerRecord<byte[], byte[]>> out = new ArrayList<>();
    try (KafkaConsumer<byte[], byte[]> consumer = new KafkaConsumer<>(props, new ByteArrayDeserializer(),
        new ByteArrayDeserializer())) {
      consumer.subscribe(List.of(topic));
      long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
      while (out.size() < want && System.nanoTime() < deadline) {
        consumer.poll(Duration.ofMillis(200)).forEach(out::add);
      }
      consumer.poll(Duration.ofMillis(500)).forEach(out::add); // nothing more (no repeats)
    }
    return out;
  }
}
