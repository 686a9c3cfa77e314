package org.pairpulse.ops;

/** Lets tests in other packages run the CLI the way {@link MainTest} does. */
public final class MainTestAccess {
  private MainTestAccess() {}

  /** What one run of the CLI printed and returned. */
  public record Run(int exitCode, String out, String err) {}

  public static Run run(String... args) {
    MainTest.Run run = MainTest.run(args);
    return new Run(run.exitCode(), run.out(), run.err());
  }
}
