package org.pairpulse.ops;

import java.util.concurrent.Callable;
import org.pairpulse.ops.tools.bench.IngestBench;
import org.pairpulse.ops.tools.bench.ReplayBenchCommand;
import org.pairpulse.ops.tools.bench.RulesBenchCommand;
import org.pairpulse.ops.tools.bench.ServeBench;
import org.pairpulse.ops.tools.bench.ShiftBenchCommand;
import org.pairpulse.ops.tools.bench.SketchBenchCommand;
import org.pairpulse.ops.tools.drift.DriftBenchCommand;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Spec;

/** {@code pairpulse bench}: the benchmarks, one subcommand each. */
@Command(name = "bench", mixinStandardHelpOptions = true,
    description = "Runs a benchmark and prints its progress and a final RESULT line.",
    subcommands = {SketchBenchCommand.class, IngestBench.class, ServeBench.class, ShiftBenchCommand.class,
        DriftBenchCommand.class, RulesBenchCommand.class, ReplayBenchCommand.class,
        org.pairpulse.ops.tools.group.GroupBenchCommand.class},
    commandListHeading = "%nBenchmarks:%n")
final class BenchCommand implements Callable<Integer> {
  @Spec
  CommandSpec spec;

  @Override
  public Integer call() {
    throw Main.missingSubcommand(spec);
  }
}
