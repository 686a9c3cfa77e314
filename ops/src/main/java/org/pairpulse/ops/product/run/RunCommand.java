package org.pairpulse.ops.product.run;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/**
 * {@code pairpulse run --config FILE}: production mode against an external Kafka cluster. Reads and checks
 * the configuration ({@link RunConfig}), starts the server and ingest ({@link Pipeline}) and runs until
 * SIGTERM or Ctrl-C (clean stop: final checkpoint and commit, exit 0) or until ingest fails (exit 1, so
 * that a supervisor restarts it).
 */
@Command(name = "run", mixinStandardHelpOptions = true, sortOptions = false,
    description = {"Runs pairpulse against a Kafka cluster: ingest, the HTTP API, the dashboard, /metrics and drift"
        + " alerts, configured by one properties file (every key: ops/README-ops-run.md; an example:"
        + " ops/config/pairpulse.example.properties).",
        "Values may read ${env:NAME} and ${file:/path}. SIGTERM or Ctrl-C stops cleanly (final checkpoint)."},
    exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:stopped cleanly, or --print-config", "1:ingest or the server failed",
        "2:invalid command line or configuration"})
public final class RunCommand implements Callable<Integer> {
  private static final Logger LOG = LoggerFactory.getLogger(RunCommand.class);

  @Spec
  CommandSpec spec;

  @Option(names = "--config", paramLabel = "FILE", required = true, description = "The configuration file (Java properties).")
  Path config;

  @Option(names = "--print-config", description = "Print the effective configuration (secrets masked) and exit.")
  boolean printConfig;

  @Override
  public Integer call() throws Exception {
    RunConfig run = read();
    PrintWriter out = spec.commandLine().getOut();
    PrintWriter err = spec.commandLine().getErr();
    for (String deprecation : run.deprecations()) {
      err.println("pairpulse run: " + config + ": " + deprecation);
    }
    err.flush();
    if (printConfig) {
      out.print(run.describe());
      out.flush();
      return 0;
    }
    CountDownLatch finished = new CountDownLatch(1);
    StopFlag stop = new StopFlag();
    Thread hook = new Thread(() -> {
      stop.requested = true;
      boolean clean = false;
      try {
        clean = finished.await(120, TimeUnit.SECONDS);
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
      Runtime.getRuntime().halt(clean && stop.exitCode == 0 ? 0 : 1);
    }, "pairpulse-run-shutdown");
    Runtime.getRuntime().addShutdownHook(hook);
    try {
      Pipeline pipeline = Pipeline.start(run.pipelineSettings());
      try {
        LOG.info("pairpulse running: {} from {} in group {}; serving {}/ (configuration {})",
            run.value("topics"), run.value("bootstrap.servers"), run.value("group.id"), pipeline.server().uri(), config);
        while (!stop.requested) {
          Throwable failure = pipeline.failure();
          if (failure != null) {
            spec.commandLine().getErr().printf(Locale.ROOT, "pairpulse run: ingest failed: %s%n", failure);
            spec.commandLine().getErr().flush();
            stop.exitCode = 1;
            return 1;
          }
          Thread.sleep(500); // watching ingest's health
        }
        LOG.info("pairpulse stopping: final checkpoint, then the server");
        return 0;
      } finally {
        pipeline.close();
      }
    } finally {
      finished.countDown();
      try {
        Runtime.getRuntime().removeShutdownHook(hook);
      } catch (IllegalStateException e) {
        // shutting down: the hook is waiting for the close above
      }
    }
  }

  /** Set by the shutdown hook; the exit code the hook ends the process with. */
  private static final class StopFlag {
    volatile boolean requested;
    volatile int exitCode;
  }

  private RunConfig read() {
    try {
      if (!Files.isRegularFile(config)) {
        throw new NoSuchFileException(config.toString());
      }
      return RunConfig.load(config);
    } catch (RunConfigException e) {
      throw new ParameterException(spec.commandLine(), e.getMessage());
    } catch (IOException e) {
      throw new ParameterException(spec.commandLine(), "cannot read " + config + " (" + e.getClass().getSimpleName()
          + (e.getMessage() == null || e.getMessage().equals(config.toString()) ? "" : ": " + e.getMessage()) + ")");
    }
  }

  /** For tests: the problems of a configuration, or an empty list. */
  static List<String> problems(Path file) throws IOException {
    try {
      RunConfig.load(file);
      return List.of();
    } catch (RunConfigException e) {
      return e.problems();
    }
  }
}
