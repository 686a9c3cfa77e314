package org.pairpulse.ingest.event;

/**
 * A record that cannot be used, with its {@link DeadLetterReason}. Carries no stack trace: poison records
 * are expected input, and building traces for them would cost more than decoding.
 */
public final class InvalidEventException extends Exception {
  private static final long serialVersionUID = 1L;
  private final transient DeadLetterReason reason;

  public InvalidEventException(DeadLetterReason reason, String detail) {
    super(detail, null, false, false);
    this.reason = reason;
  }

  public DeadLetterReason reason() {
    return reason;
  }

  /** A short human description (also sent in the dead letter's detail header). */
  public String detail() {
    return getMessage();
  }
}
