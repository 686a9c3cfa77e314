package org.pairpulse.serve.alerts;

import java.util.List;
import java.util.Optional;
import org.pairpulse.serve.drift.AlertEvent;

/**
 * Who raises a group's alerts, and how they are published exactly once (group mode). The instances of a group all
 * detect drift on the same global table; one of them at a time, the leader, publishes. Who leads is Kafka's
 * decision (the wiring's implementation: the owner of a designated input partition under the group's assignment);
 * the alert state machine's state travels with the events, so that a successor neither repeats nor drops one.
 *
 * <p>Called from the server's watcher thread only.
 */
public interface AlertLeadership {
  /** True while this instance should lead. Must not block. */
  boolean leading();

  /**
   * This instance starts leading: fences any previous leader and returns the alert state it committed last (empty:
   * none yet). Blocks while the previous leader's open publication is aborted.
   *
   * @throws RuntimeException when leadership cannot be taken now (tried again at the next table)
   */
  Optional<byte[]> takeOver();

  /**
   * Publishes {@code events} with the alert state after them, atomically: both or neither.
   *
   * @return false when this instance no longer leads (another took over): nothing was published
   */
  boolean publish(List<AlertEvent> events, byte[] state);

  /** Gives up leading (shutdown). */
  default void close() {}
}
