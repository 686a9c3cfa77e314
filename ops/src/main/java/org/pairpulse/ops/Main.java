package org.pairpulse.ops;

import java.io.PrintWriter;
import java.util.concurrent.Callable;
import org.pairpulse.ops.analysis.backtest.BacktestCommand;
import org.pairpulse.ops.analysis.report.ReportCommand;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.IExecutionExceptionHandler;
import picocli.CommandLine.IParameterExceptionHandler;
import picocli.CommandLine.IVersionProvider;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.ParseResult;
import picocli.CommandLine.Spec;
import picocli.CommandLine.UnmatchedArgumentException;

/**
 * The {@code pairpulse} command line (run through the launcher {@code ops/pairpulse}).
 *
 * <h2>Exit codes</h2>
 * <ul>
 *   <li>{@value #EXIT_OK}: the command did its work;</li>
 *   <li>{@value #EXIT_FAILED}: the command failed while running (the message says why);</li>
 *   <li>{@value #EXIT_USAGE}: the command line was wrong: unknown or invalid options, a missing
 *       subcommand. The message names the problem and the help to read.</li>
 * </ul>
 * Set {@code PAIRPULSE_STACKTRACE=1} to see the stack trace of a failure.
 */
@Command(name = "pairpulse", mixinStandardHelpOptions = true, versionProvider = Main.Version.class,
    description = "Streaming market-basket association engine: pair statistics over sliding windows and decaying"
        + " horizons in fixed memory.",
    subcommands = {BenchCommand.class, BacktestCommand.class, ReportCommand.class,
        org.pairpulse.ops.tools.demo.DemoCommand.class, org.pairpulse.ops.product.run.RunCommand.class,
        picocli.CommandLine.HelpCommand.class},
    // picocli's defaults for every command (usage error 2, failure 1), named here because they are our contract
    exitCodeOnInvalidInput = Main.EXIT_USAGE,
    exitCodeOnExecutionException = Main.EXIT_FAILED,
    commandListHeading = "%nCommands:%n",
    exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:success", "1:the command failed", "2:invalid command line"})
public final class Main implements Callable<Integer> {
  public static final int EXIT_OK = 0;
  public static final int EXIT_FAILED = 1;
  public static final int EXIT_USAGE = 2;

  @Spec
  CommandSpec spec;

  @Override
  public Integer call() {
    throw missingSubcommand(spec);
  }

  public static void main(String[] args) {
    System.exit(commandLine().execute(args));
  }

  /** The configured command line (help, version, error handling), writing to stdout and stderr. */
  public static CommandLine commandLine() {
    return new CommandLine(new Main())
        .setParameterExceptionHandler(new UsageErrors())
        .setExecutionExceptionHandler(new Failures());
  }

  /** A usage error for a command that needs a subcommand but got none. */
  static ParameterException missingSubcommand(CommandSpec spec) {
    return new ParameterException(spec.commandLine(), "missing command: choose one of "
        + String.join(", ", spec.subcommands().keySet()));
  }

  /** Prints "pairpulse …: message", a suggestion for typos and where to read the help; exit code 2. */
  static final class UsageErrors implements IParameterExceptionHandler {
    @Override
    public int handleParseException(ParameterException e, String[] args) {
      CommandLine command = e.getCommandLine();
      PrintWriter err = command.getErr();
      err.println(command.getColorScheme().errorText(qualifiedName(command) + ": " + e.getMessage()));
      if (!UnmatchedArgumentException.printSuggestions(e, err)) {
        err.println("Try '" + qualifiedName(command) + " --help' for more information.");
      }
      err.flush();
      return command.getExitCodeExceptionMapper() != null
          ? command.getExitCodeExceptionMapper().getExitCode(e)
          : command.getCommandSpec().exitCodeOnInvalidInput();
    }
  }

  /** Prints "pairpulse …: failed: message" (the stack trace with PAIRPULSE_STACKTRACE=1); exit code 1. */
  static final class Failures implements IExecutionExceptionHandler {
    @Override
    public int handleExecutionException(Exception e, CommandLine command, ParseResult parseResult) {
      PrintWriter err = command.getErr();
      StringBuilder message = new StringBuilder(qualifiedName(command)).append(": failed: ").append(describe(e));
      for (Throwable cause = e.getCause(); cause != null && cause != cause.getCause(); cause = cause.getCause()) {
        message.append(System.lineSeparator()).append("  caused by: ").append(describe(cause));
      }
      err.println(command.getColorScheme().errorText(message.toString()));
      if ("1".equals(System.getenv("PAIRPULSE_STACKTRACE"))) {
        e.printStackTrace(err);
      }
      err.flush();
      return command.getCommandSpec().exitCodeOnExecutionException();
    }

    private static String describe(Throwable t) {
      return t.getMessage() == null ? t.getClass().getName() : t.getMessage() + " (" + t.getClass().getSimpleName() + ")";
    }
  }

  static String qualifiedName(CommandLine command) {
    return command.getCommandSpec().qualifiedName();
  }

  /** The version from the jar manifest (Implementation-Version), and the Java runtime. */
  static final class Version implements IVersionProvider {
    @Override
    public String[] getVersion() {
      String version = Main.class.getPackage().getImplementationVersion();
      return new String[] {
          "pairpulse " + (version == null ? "(development build)" : version),
          "Java " + Runtime.version() + " (" + System.getProperty("java.vm.name") + ")"};
    }
  }
}
