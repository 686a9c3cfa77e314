package org.pairpulse.ingest.testkit;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.FileReader;
import java.io.IOException;
import java.io.Reader;
import java.util.HashMap;
import java.util.Map;
import java.util.Properties;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.sketch.fixtures.ChildJvm;
import org.pairpulse.sketch.time.EventClock;

/**
 * An ingest instance in a JVM of its own, so that a test can kill it like kill -9 ({@code destroyForcibly}).
 * Argument: a properties file of ingest settings. Prints {@code at <records handled>} lines to stdout.
 */
public final class ChildIngest {
  private ChildIngest() {}

  public static void main(String[] args) throws IOException, InterruptedException {
    Properties properties = new Properties();
    try (Reader in = new FileReader(args[0], java.nio.charset.StandardCharsets.UTF_8)) {
      properties.load(in);
    }
    Map<String, Object> props = new HashMap<>();
    properties.forEach((k, v) -> props.put(k.toString(), v));
    ChildJvm.haltWhenParentGoes();
    Ingestor ingestor = new Ingestor(new IngestConfig(props), Workload.engineConfig(), new SimpleMeterRegistry(),
        EventClock.system()).start();
    System.out.println("started " + ingestor.instanceId());
    ChildJvm.printPositions(() -> ingestor.positions().values().stream().mapToLong(Long::longValue).sum(),
        ingestor::isRunning, 2);
    System.out.println("stopped " + ingestor.failure());
  }

  /** Starts a child JVM running this class with the test class path. */
  public static Process launch(java.nio.file.Path propsFile, java.nio.file.Path log) throws IOException {
    return ChildJvm.launch(ChildIngest.class, propsFile.toString(), log);
  }

  /** Writes ingest settings to a properties file. */
  public static void write(Map<String, Object> props, java.nio.file.Path file) throws IOException {
    Properties out = new Properties();
    props.forEach((k, v) -> out.setProperty(k, v.toString()));
    try (java.io.Writer w = java.nio.file.Files.newBufferedWriter(file)) {
      out.store(w, "child ingest");
    }
  }

}
