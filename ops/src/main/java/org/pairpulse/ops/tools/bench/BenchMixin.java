package org.pairpulse.ops.tools.bench;

import java.io.PrintWriter;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/**
 * What every {@code pairpulse bench ...} command shares, as a picocli mixin: the exit codes it promises (its
 * {@code @Command} puts the list in the command's usage help), the command's output, and its usage errors (exit
 * code 2). Add it with {@code @Mixin BenchMixin bench;}.
 */
@Command(exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:benchmark ran; RESULT printed", "1:the benchmark failed", "2:invalid options"})
public final class BenchMixin {
  @Spec(Spec.Target.MIXEE)
  CommandSpec command;

  /** The command line of the command this mixin is part of. */
  public CommandLine commandLine() {
    return command.commandLine();
  }

  /** Where progress and the RESULT line go. */
  public PrintWriter out() {
    return commandLine().getOut();
  }

  /** Where warnings go. */
  public PrintWriter err() {
    return commandLine().getErr();
  }

  /** A usage error of this command: picocli prints {@code message} and exits with 2. */
  public ParameterException usage(String message) {
    return new ParameterException(commandLine(), message);
  }

  /** {@link #usage(String)} with its cause. */
  public ParameterException usage(String message, Throwable cause) {
    return new ParameterException(commandLine(), message, cause);
  }
}
