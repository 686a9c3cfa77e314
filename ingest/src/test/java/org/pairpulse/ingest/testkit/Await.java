package org.pairpulse.ingest.testkit;

import java.time.Duration;
import java.util.function.BooleanSupplier;
import java.util.function.Supplier;

/** Condition waits with a bound and a message that says what was awaited and what was seen. */
public final class Await {
  private Await() {}

  public static void until(Duration timeout, String what, BooleanSupplier condition, Supplier<String> seen) {
    long deadline = System.nanoTime() + timeout.toNanos();
    while (!condition.getAsBoolean()) {
      if (System.nanoTime() > deadline) {
        throw new AssertionError("timed out after " + timeout.toSeconds() + " s waiting for " + what + "; seen: " + seen.get());
      }
      try {
        Thread.sleep(20); // polling interval of the condition, not a synchronisation
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        throw new AssertionError("interrupted waiting for " + what, e);
      }
    }
  }
}
