package org.pairpulse.ops.product.run;

import java.util.List;

/** A configuration file that cannot be used: every problem found, one message each (key, value, what is allowed). */
public final class RunConfigException extends IllegalArgumentException {
  private static final long serialVersionUID = 1L;

  private final transient List<String> problems;

  RunConfigException(String source, List<String> problems) {
    super(source + ": " + (problems.size() == 1 ? problems.get(0)
        : problems.size() + " problems:" + System.lineSeparator() + "  " + String.join(System.lineSeparator() + "  ",
            problems)));
    this.problems = List.copyOf(problems);
  }

  /** The problems, one message each. */
  public List<String> problems() {
    return problems;
  }
}
