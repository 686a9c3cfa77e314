package org.pairpulse.serve.alerts;

import org.pairpulse.serve.drift.AlertEvent;

/**
 * Somewhere alert events go. {@link #publish} is called from the alert dispatcher's own thread and
 * must hand the event off without waiting for delivery (never block ingest or serving).
 */
public interface AlertSink extends AutoCloseable {
  /** A short name for metrics and logs (e.g. {@code kafka}, {@code webhook}). */
  String name();

  /**
   * Hands one event off for delivery.
   *
   * @param event the event
   * @param cloudEvent the event already formatted as a structured-mode CloudEvent ({@link CloudEvents#json})
   */
  void publish(AlertEvent event, byte[] cloudEvent);

  @Override
  void close();
}
