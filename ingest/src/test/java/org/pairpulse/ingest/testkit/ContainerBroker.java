package org.pairpulse.ingest.testkit;

import org.testcontainers.DockerClientFactory;
import org.testcontainers.kafka.KafkaContainer;

/** The Testcontainers variant of the shared broker (used only with -Dbroker=container and a Docker engine). */
final class ContainerBroker {
  private ContainerBroker() {}

  static boolean dockerAvailable() {
    try {
      return DockerClientFactory.instance().isDockerAvailable();
    } catch (RuntimeException | LinkageError e) {
      return false;
    }
  }

  static Broker start() {
    KafkaContainer container = new KafkaContainer("apache/kafka:4.1.0")
        .withEnv("KAFKA_GROUP_MIN_SESSION_TIMEOUT_MS", "1000")
        .withEnv("KAFKA_TRANSACTION_ABORT_TIMED_OUT_TRANSACTION_CLEANUP_INTERVAL_MS", "1000")
        .withEnv("KAFKA_TRANSACTION_STATE_LOG_REPLICATION_FACTOR", "1")
        .withEnv("KAFKA_TRANSACTION_STATE_LOG_MIN_ISR", "1");
    container.start();
    return new Broker() {
      @Override
      public String bootstrapServers() {
        return container.getBootstrapServers();
      }

      @Override
      public void close() {
        container.stop();
      }
    };
  }
}
