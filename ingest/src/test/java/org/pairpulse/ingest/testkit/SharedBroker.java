package org.pairpulse.ingest.testkit;

import java.util.Locale;
import org.junit.jupiter.api.extension.ConditionEvaluationResult;
import org.junit.jupiter.api.extension.ExecutionCondition;
import org.junit.jupiter.api.extension.ExtensionContext;
import org.junit.jupiter.api.extension.ParameterContext;
import org.junit.jupiter.api.extension.ParameterResolver;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;

/**
 * One broker per test JVM, shared by every integration test class: the in-process KRaft broker by default,
 * or a Testcontainers Kafka broker with {@code -Dbroker=container}. The container variant is disabled, with
 * the reason shown, when no Docker engine is reachable. Inject it as a {@link Broker} parameter.
 */
public final class SharedBroker implements ExecutionCondition, ParameterResolver {
  private static final ExtensionContext.Namespace NAMESPACE = ExtensionContext.Namespace.create(SharedBroker.class);

  static String mode() {
    return System.getProperty("broker", "embedded").toLowerCase(Locale.ROOT);
  }

  @Override
  public ConditionEvaluationResult evaluateExecutionCondition(ExtensionContext context) {
    if (mode().equals("container") && !ContainerBroker.dockerAvailable()) {
      return ConditionEvaluationResult.disabled("-Dbroker=container runs these tests against a Testcontainers Kafka broker "
          + "and needs a Docker engine; none is reachable on this machine (the in-process broker variant runs by default)");
    }
    return ConditionEvaluationResult.enabled("broker: " + mode());
  }

  @Override
  public boolean supportsParameter(ParameterContext parameter, ExtensionContext context) {
    return parameter.getParameter().getType() == Broker.class;
  }

  @Override
  public Object resolveParameter(ParameterContext parameter, ExtensionContext context) {
    return context.getRoot().getStore(NAMESPACE).getOrComputeIfAbsent("broker", k -> start(), Broker.class);
  }

  private static Broker start() {
    if (mode().equals("container")) {
      return ContainerBroker.start();
    }
    long t0 = System.nanoTime();
    EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder()
        // quick failure detection and transaction expiry for the kill tests
        .property("group.min.session.timeout.ms", "1000")
        .property("transaction.abort.timed.out.transaction.cleanup.interval.ms", "1000")
        .build().start();
    System.out.printf("embedded broker at %s started in %d ms%n", broker.bootstrapServers(), (System.nanoTime() - t0) / 1_000_000);
    return new Broker() {
      @Override
      public String bootstrapServers() {
        return broker.bootstrapServers();
      }

      @Override
      public void close() {
        broker.close();
      }
    };
  }
}
