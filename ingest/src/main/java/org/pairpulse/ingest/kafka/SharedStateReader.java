package org.pairpulse.ingest.kafka;

import java.time.Duration;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.ReentrantLock;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.Consumer;

/**
 * The one state-topic reader of a running instance (group mode): a {@code read_committed} consumer without a group,
 * shared by the checkpoint restores (poll thread) and the group view (its own thread), so that an instance runs its
 * group consumer and this reader, not one reader per job.
 *
 * <p>A {@link Consumer} is not safe for concurrent use, so its users take turns ({@link #use}, a fair lock). Each user
 * holds a {@link Lease}; a turn is told whether another lease used the reader since this lease's last turn, in which
 * case the reader's assignment and positions are someone else's and the user puts back its own (the group view
 * re-seeks its state partitions; a restore always assigns and seeks first).
 */
public final class SharedStateReader implements AutoCloseable {
  private final Consumer<byte[], byte[]> consumer;
  private final ReentrantLock lock = new ReentrantLock(true);
  private Lease lastUser; // guarded by lock
  private boolean closed; // guarded by lock

  /** What a turn does with the reader. */
  @FunctionalInterface
  public interface Turn<T> {
    /**
     * @param reader the shared consumer, for this turn only
     * @param lent true when another lease used the reader since this lease's last turn (or this is the first turn)
     */
    T run(Consumer<byte[], byte[]> reader, boolean lent);
  }

  /** One user's handle on the shared reader. */
  public final class Lease {
    private Lease() {}

    /** Runs {@code turn} with the reader, waiting for the current turn to end; fails once the reader is closed. */
    public <T> T use(Turn<T> turn) {
      lock.lock();
      try {
        if (closed) {
          throw new IllegalStateException("the state-topic reader is closed");
        }
        boolean lent = lastUser != this;
        lastUser = this;
        return turn.run(consumer, lent);
      } finally {
        lock.unlock();
      }
    }

    /** Interrupts a turn blocked in {@code poll} (it throws {@code WakeupException}); any thread. */
    public void wakeup() {
      consumer.wakeup();
    }
  }

  /** @param consumer a {@code read_committed} consumer without a group; closed with this reader */
  public SharedStateReader(Consumer<byte[], byte[]> consumer) {
    this.consumer = consumer;
  }

  /** A new user's handle. */
  public Lease lease() {
    return new Lease();
  }

  /** Closes the consumer after the turn in progress (waiting at most {@code timeout} for it). */
  public void close(Duration timeout) {
    boolean locked = false;
    try {
      locked = lock.tryLock(timeout.toMillis(), TimeUnit.MILLISECONDS);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
    if (!locked) {
      consumer.wakeup(); // a turn is stuck in poll: end it, then close
      lock.lock();
    }
    try {
      if (!closed) {
        closed = true;
        consumer.close(CloseOptions.timeout(Duration.ofSeconds(5)));
      }
    } finally {
      lock.unlock();
    }
  }

  @Override
  public void close() {
    close(Duration.ofSeconds(10));
  }
}
