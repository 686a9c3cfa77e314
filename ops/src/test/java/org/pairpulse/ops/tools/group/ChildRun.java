package org.pairpulse.ops.tools.group;

import java.io.IOException;
import java.nio.file.Path;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.product.run.RunConfig;
import org.pairpulse.sketch.fixtures.ChildJvm;

/**
 * {@code pairpulse run --config FILE} in a JVM of its own, so that a test can kill it like kill -9
 * ({@code destroyForcibly}). Prints {@code port <n>} once serving and {@code at <records handled>} as it reads.
 */
public final class ChildRun {
  private ChildRun() {}

  public static void main(String[] args) throws Exception {
    ChildJvm.haltWhenParentGoes();
    Pipeline pipeline = Pipeline.start(RunConfig.load(Path.of(args[0])).pipelineSettings());
    System.out.println("port " + pipeline.server().port());
    ChildJvm.printPositions(() -> pipeline.ingestor().positions().values().stream().mapToLong(Long::longValue).sum(),
        () -> pipeline.failure() == null, 5);
    System.out.println("failed " + pipeline.failure());
  }

  /** Starts a child JVM running this class with the test class path; stderr goes to {@code log}. */
  static Process launch(Path config, Path log) throws IOException {
    return ChildJvm.launch(ChildRun.class, config.toString(), log);
  }
}
