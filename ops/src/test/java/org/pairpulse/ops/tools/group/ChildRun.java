package org.pairpulse.ops.tools.group;

import java.io.IOException;
import java.nio.file.Path;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.product.run.RunConfig;

/**
 * {@code pairpulse run --config FILE} in a JVM of its own, so that a test can kill it like kill -9
 * ({@code destroyForcibly}). Prints {@code port <n>} once serving and {@code at <records handled>} as it reads.
 */
public final class ChildRun {
  private ChildRun() {}

  public static void main(String[] args) throws Exception {
    Thread orphanWatch = new Thread(() -> { // the parent holds our stdin: when it ends, do not outlive the test
      try {
        while (System.in.read() >= 0) {
          // nothing is sent; only the end matters
        }
      } catch (IOException e) {
        // treated like the end
      }
      Runtime.getRuntime().halt(3);
    }, "orphan-watch");
    orphanWatch.setDaemon(true);
    orphanWatch.start();
    Pipeline pipeline = Pipeline.start(RunConfig.load(Path.of(args[0])).pipelineSettings());
    System.out.println("port " + pipeline.server().port());
    long last = -1;
    while (pipeline.failure() == null) {
      long at = pipeline.ingestor().positions().values().stream().mapToLong(Long::longValue).sum();
      if (at != last) {
        System.out.println("at " + at);
        System.out.flush();
        last = at;
      }
      Thread.sleep(5); // reporting cadence
    }
    System.out.println("failed " + pipeline.failure());
  }

  /** Starts a child JVM running this class with the test class path; stderr goes to {@code log}. */
  static Process launch(Path config, Path log) throws IOException {
    String classPath = System.getProperty("surefire.test.class.path", System.getProperty("java.class.path"));
    String javaBin = Path.of(System.getProperty("java.home"), "bin", "java").toString();
    ProcessBuilder builder = new ProcessBuilder(javaBin, "-Xmx384m", "-XX:+UseSerialGC", "-XX:TieredStopAtLevel=1",
        "-cp", classPath, ChildRun.class.getName(), config.toString());
    builder.redirectError(log.toFile());
    return builder.start();
  }
}
