package org.pairpulse.serve.alerts;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;

/** Meter names of alert delivery. */
final class ServeAlertMeters {
  private ServeAlertMeters() {}

  /** {@code pairpulse_alert_deliveries_total{sink, outcome}}. */
  static Counter deliveries(MeterRegistry registry, String sink, String outcome) {
    return Counter.builder("pairpulse.alert.deliveries").description("Alert events handed to a sink, by outcome")
        .tag("sink", sink).tag("outcome", outcome).register(registry);
  }
}
