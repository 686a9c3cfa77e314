package org.pairpulse.serve.alerts;

import com.fasterxml.jackson.core.type.TypeReference;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.Map;
import java.util.TreeMap;
import org.pairpulse.serve.drift.DriftMonitor;

/**
 * The alert state of every segment as it travels from one alert leader to the next (group mode): JSON, an object of
 * segment name to {@link DriftMonitor.AlertState} ({@code firstWatermarkMillis}, {@code tracks}: pair, kind, state
 * and the track's times). Small: one entry per pair and kind that is pending, active, clearing or cooling down.
 */
public final class AlertStates {
  private static final ObjectMapper JSON = new ObjectMapper();
  private static final TypeReference<TreeMap<String, DriftMonitor.AlertState>> TYPE = new TypeReference<>() {};

  private AlertStates() {}

  public static byte[] encode(Map<String, DriftMonitor.AlertState> states) {
    try {
      return JSON.writeValueAsBytes(new TreeMap<>(states));
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** @throws IllegalArgumentException when {@code bytes} are not an alert state */
  public static Map<String, DriftMonitor.AlertState> decode(byte[] bytes) {
    try {
      return JSON.readValue(bytes, TYPE);
    } catch (IOException e) {
      throw new IllegalArgumentException("not an alert state: " + e.getMessage(), e);
    }
  }
}
