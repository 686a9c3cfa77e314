package org.pairpulse.ingest.broker;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.io.PrintStream;
import java.io.UncheckedIOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.charset.StandardCharsets;
import java.nio.file.FileVisitResult;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.SimpleFileVisitor;
import java.nio.file.attribute.BasicFileAttributes;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Properties;
import java.util.concurrent.TimeUnit;
import kafka.server.KafkaConfig;
import kafka.server.KafkaRaftServer;
import kafka.tools.StorageTool;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.common.Uuid;
import org.apache.kafka.common.utils.Time;
import org.pairpulse.ingest.kafka.Topics;

/**
 * A single-node Kafka broker (KRaft, broker and controller in one) running inside this JVM, built from
 * Kafka's own artifacts: for the integration tests and the demo. Not for production.
 *
 * <pre>{@code
 * try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
 *   broker.createTopic("baskets", 4);
 *   String bootstrap = broker.bootstrapServers();
 * }
 * }</pre>
 *
 * <p>Start-up formats a fresh log directory with {@code kafka.tools.StorageTool} and starts
 * {@code kafka.server.KafkaRaftServer} (about 3-4 s here); {@link #close()} shuts it down and deletes the
 * directory unless one was given. Internal topics have replication factor 1 and few partitions, the log
 * cleaner a small buffer; every setting can be overridden with {@link Builder#property}. Memory: plan
 * for 350-400 MB resident besides the heap the clients need.
 */
public final class EmbeddedKafkaBroker implements AutoCloseable {
  private final Properties props;
  private final Path logDir;
  private final boolean deleteLogDir;
  private final String bootstrapServers;
  private KafkaRaftServer server;

  private EmbeddedKafkaBroker(Properties props, Path logDir, boolean deleteLogDir, String bootstrapServers) {
    this.props = props;
    this.logDir = logDir;
    this.deleteLogDir = deleteLogDir;
    this.bootstrapServers = bootstrapServers;
  }

  public static Builder builder() {
    return new Builder();
  }

  /** Settings before start. */
  public static final class Builder {
    private final Map<String, String> overrides = new LinkedHashMap<>();
    private Path logDir;
    private int nodeId = 1;

    private Builder() {}

    /** A broker property (overrides the defaults of this class). */
    public Builder property(String key, String value) {
      overrides.put(key, value);
      return this;
    }

    /** Where the logs go; kept on close. Default: a temporary directory deleted on close. */
    public Builder logDir(Path dir) {
      this.logDir = dir;
      return this;
    }

    public Builder nodeId(int id) {
      this.nodeId = id;
      return this;
    }

    public EmbeddedKafkaBroker build() {
      try {
        boolean temporary = logDir == null;
        Path dir = temporary ? Files.createTempDirectory("pairpulse-kafka-") : logDir;
        int brokerPort = freePort();
        int controllerPort = freePort();
        String host = "127.0.0.1";
        Properties p = new Properties();
        p.put("process.roles", "broker,controller");
        p.put("node.id", Integer.toString(nodeId));
        p.put("controller.quorum.voters", nodeId + "@" + host + ":" + controllerPort);
        p.put("listeners", "PLAINTEXT://" + host + ":" + brokerPort + ",CONTROLLER://" + host + ":" + controllerPort);
        p.put("advertised.listeners", "PLAINTEXT://" + host + ":" + brokerPort);
        p.put("controller.listener.names", "CONTROLLER");
        p.put("inter.broker.listener.name", "PLAINTEXT");
        p.put("listener.security.protocol.map", "PLAINTEXT:PLAINTEXT,CONTROLLER:PLAINTEXT");
        p.put("log.dirs", dir.resolve("logs").toString());
        p.put("offsets.topic.replication.factor", "1");
        p.put("offsets.topic.num.partitions", "4");
        p.put("transaction.state.log.replication.factor", "1");
        p.put("transaction.state.log.min.isr", "1");
        p.put("transaction.state.log.num.partitions", "4");
        p.put("share.coordinator.state.topic.replication.factor", "1");
        p.put("share.coordinator.state.topic.min.isr", "1");
        p.put("group.initial.rebalance.delay.ms", "0");
        p.put("num.partitions", "1");
        p.put("log.cleaner.dedupe.buffer.size", Integer.toString(8 << 20));
        p.put("log.cleaner.threads", "1");
        overrides.forEach(p::put);
        return new EmbeddedKafkaBroker(p, dir, temporary, host + ":" + brokerPort);
      } catch (IOException e) {
        throw new UncheckedIOException("cannot prepare the embedded broker", e);
      }
    }

    private static int freePort() throws IOException {
      try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
        socket.setReuseAddress(true);
        return socket.getLocalPort();
      }
    }
  }

  /** Formats the log directory and starts the broker; returns when it accepts requests. */
  public synchronized EmbeddedKafkaBroker start() {
    if (server != null) {
      return this;
    }
    try {
      Path configFile = logDir.resolve("server.properties");
      try (OutputStream out = Files.newOutputStream(configFile)) {
        props.store(out, "pairpulse embedded broker");
      }
      ByteArrayOutputStream output = new ByteArrayOutputStream();
      int rc;
      try (PrintStream print = new PrintStream(output, true, StandardCharsets.UTF_8)) {
        rc = StorageTool.execute(new String[] {"format", "--config", configFile.toString(), "--cluster-id",
            Uuid.randomUuid().toString(), "--ignore-formatted"}, print);
      }
      if (rc != 0) {
        throw new IllegalStateException("formatting the broker's log directory failed (" + rc + "): " + output);
      }
      KafkaRaftServer raft = new KafkaRaftServer(KafkaConfig.fromProps(props, false), Time.SYSTEM);
      server = raft;
      try {
        raft.startup();
        awaitReady();
      } catch (RuntimeException e) {
        close(); // a half-started broker keeps its threads and ports
        throw e;
      }
      return this;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot start the embedded broker", e);
    }
  }

  private void awaitReady() {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
    RuntimeException last = null;
    while (System.nanoTime() < deadline) {
      try (Admin admin = admin()) {
        if (!admin.describeCluster().nodes().get(5, TimeUnit.SECONDS).isEmpty()) {
          return;
        }
      } catch (Exception e) {
        last = new IllegalStateException(e);
      }
    }
    throw new IllegalStateException("embedded broker did not become ready within 60 s", last);
  }

  /** {@code host:port} of the PLAINTEXT listener. */
  public String bootstrapServers() {
    return bootstrapServers;
  }

  /** A new admin client for this broker (close it). */
  public Admin admin() {
    return Admin.create(Map.of(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers));
  }

  /** Creates a topic (replication factor 1). */
  public void createTopic(String name, int partitions) {
    createTopic(name, partitions, Map.of());
  }

  /**
   * Creates a topic (replication factor 1) with topic configs; returns once every partition accepts writes
   * (see {@link Topics#awaitWritable}: producing at once could otherwise fail with sequence errors).
   */
  public void createTopic(String name, int partitions, Map<String, String> configs) {
    try (Admin admin = admin()) {
      admin.createTopics(List.of(new NewTopic(name, Optional.of(partitions), Optional.of((short) 1)).configs(configs)))
          .all().get(60, TimeUnit.SECONDS);
      Topics.awaitWritable(admin, List.of(name), java.time.Duration.ofSeconds(60));
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted creating topic " + name, e);
    } catch (Exception e) {
      throw new IllegalStateException("cannot create topic " + name + ": " + e.getMessage(), e);
    }
  }

  /** The broker's properties (as given to it). */
  public Properties properties() {
    Properties copy = new Properties();
    copy.putAll(props);
    return copy;
  }

  public Path logDir() {
    return logDir;
  }

  @Override
  public synchronized void close() {
    if (server != null) {
      server.shutdown();
      server.awaitShutdown();
      server = null;
    }
    if (deleteLogDir) {
      deleteRecursively(logDir);
    }
  }

  private static void deleteRecursively(Path dir) {
    if (!Files.exists(dir)) {
      return;
    }
    try {
      Files.walkFileTree(dir, new SimpleFileVisitor<>() {
        @Override
        public FileVisitResult visitFile(Path file, BasicFileAttributes attrs) throws IOException {
          Files.deleteIfExists(file);
          return FileVisitResult.CONTINUE;
        }

        @Override
        public FileVisitResult postVisitDirectory(Path d, IOException e) throws IOException {
          Files.deleteIfExists(d);
          return FileVisitResult.CONTINUE;
        }
      });
    } catch (IOException e) {
      // a leftover temporary directory is harmless
    }
  }
}
