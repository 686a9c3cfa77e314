package org.pairpulse.ops.tools.bench;

import picocli.CommandLine.Command;

/**
 * The exit codes every {@code pairpulse bench ...} command promises, as a picocli mixin: its {@code @Command} puts the
 * list in the command's usage help. Add it with {@code @Mixin BenchExitCodes exitCodes;}.
 */
@Command(exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:benchmark ran; RESULT printed", "1:the benchmark failed", "2:invalid options"})
public final class BenchExitCodes {}
