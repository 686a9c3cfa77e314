package org.pairpulse.ingest.segment;

import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.NavigableMap;
import java.util.Objects;
import java.util.TreeMap;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * The engines of one partition (or of one replayed stream): segment {@value SegmentSettings#ALL} and one per
 * admitted segment value ({@link SegmentSettings}). Single writer, like {@link PairEngine}.
 *
 * <p>Which values have an engine is state: it is decided by the order of the baskets (the first
 * {@code maxValuesPerAttribute} plain values of an attribute win), and restored with the engines, so a
 * restart decides exactly as an uninterrupted run. Hot path without segment attributes: one
 * {@code addBasket}, no lookup, no allocation; with them: one hash lookup per configured attribute.
 */
public final class SegmentEngines {
  /** Why a basket's attribute value made no segment. */
  public enum Skip {
    /** The attribute already has {@code maxValuesPerAttribute} segments in this partition. */
    OVER_BOUND("over_bound"),
    /** The value is not a plain name ({@link SegmentSettings#VALUE}). */
    INVALID_VALUE("invalid_value");

    private final String wireName;

    Skip(String wireName) {
      this.wireName = wireName;
    }

    /** The metric tag value. */
    public String wireName() {
      return wireName;
    }
  }

  /** Told about every skipped value (on the writer's thread). */
  @FunctionalInterface
  public interface SkipListener {
    void skipped(String attribute, String value, Skip reason);
  }

  private final SegmentSettings settings;
  private final EngineConfig segmentConfig;
  private final PairEngine all;
  private final String[] attributes;
  private final List<Map<String, PairEngine>> byValue; // per attribute: value -> engine
  private final TreeMap<String, PairEngine> byName = new TreeMap<>();
  private final SkipListener listener;

  /** Empty engines. */
  public SegmentEngines(EngineConfig allConfig, SegmentSettings settings, SkipListener listener) {
    this(new PairEngine(allConfig), Map.of(), settings, listener);
  }

  /**
   * Restored engines: {@code all} and the segment engines by name ({@code attribute=value}). Segments of
   * attributes that are no longer configured are left out (see {@link #droppedOnRestore}).
   *
   * @throws IllegalArgumentException when a segment engine's configuration is not {@link SegmentSettings#segmentEngine}
   *     of {@code all}'s
   */
  public SegmentEngines(PairEngine all, Map<String, PairEngine> segments, SegmentSettings settings, SkipListener listener) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.all = Objects.requireNonNull(all, "all");
    this.segmentConfig = settings.segmentEngine(all.config());
    this.listener = listener == null ? (a, v, r) -> { } : listener;
    this.attributes = settings.attributes().toArray(new String[0]);
    this.byValue = new java.util.ArrayList<>(attributes.length);
    for (int i = 0; i < attributes.length; i++) {
      byValue.add(new HashMap<>());
    }
    for (Map.Entry<String, PairEngine> e : segments.entrySet()) {
      String attribute = SegmentSettings.attributeOf(e.getKey());
      int index = settings.attributes().indexOf(attribute);
      if (index < 0) {
        continue; // no longer configured: dropped
      }
      if (!e.getValue().config().equals(segmentConfig)) {
        throw new IllegalArgumentException("segment '" + e.getKey() + "' was written with another engine configuration"
            + " (segments.tracked.fraction or engine.* changed):\n  " + e.getValue().config() + "\nconfigured:\n  "
            + segmentConfig);
      }
      byValue.get(index).put(e.getKey().substring(attribute.length() + 1), e.getValue());
      byName.put(e.getKey(), e.getValue());
    }
  }

  /** Segments of {@code restored} whose attribute is not configured (they are dropped), for a warning. */
  public static List<String> droppedOnRestore(Map<String, ?> restored, SegmentSettings settings) {
    return restored.keySet().stream().filter(name -> !settings.attributes().contains(SegmentSettings.attributeOf(name)))
        .sorted().toList();
  }

  /**
   * Counts one basket in {@value SegmentSettings#ALL} and in the segment of each configured attribute it carries.
   *
   * @param attributes the basket's attributes; null or empty: {@value SegmentSettings#ALL} only
   */
  public void addBasket(long eventMillis, String[] items, Map<String, String> attributes) {
    all.addBasket(eventMillis, items);
    if (attributes == null || attributes.isEmpty()) {
      return;
    }
    for (int i = 0; i < this.attributes.length; i++) {
      String value = attributes.get(this.attributes[i]);
      if (value == null) {
        continue;
      }
      Map<String, PairEngine> values = byValue.get(i);
      PairEngine engine = values.get(value);
      if (engine == null) {
        engine = admit(i, value);
        if (engine == null) {
          continue;
        }
      }
      engine.addBasket(eventMillis, items);
    }
  }

  private PairEngine admit(int attribute, String value) {
    Map<String, PairEngine> values = byValue.get(attribute);
    if (!SegmentSettings.validValue(value)) {
      listener.skipped(attributes[attribute], value, Skip.INVALID_VALUE);
      return null;
    }
    if (values.size() >= settings.maxValuesPerAttribute()) {
      listener.skipped(attributes[attribute], value, Skip.OVER_BOUND);
      return null;
    }
    PairEngine engine = new PairEngine(segmentConfig);
    values.put(value, engine);
    byName.put(SegmentSettings.name(attributes[attribute], value), engine);
    return engine;
  }

  /** The engine of segment {@value SegmentSettings#ALL}. */
  public PairEngine all() {
    return all;
  }

  /** The segment engines by name, in name order (live, not copies; writer thread only). */
  public NavigableMap<String, PairEngine> segments() {
    return Collections.unmodifiableNavigableMap(byName);
  }

  /** The configuration of the segment engines. */
  public EngineConfig segmentConfig() {
    return segmentConfig;
  }

  public SegmentSettings settings() {
    return settings;
  }

  /** State bytes of every engine. */
  public long stateBytes() {
    long bytes = all.stateBytes();
    for (PairEngine engine : byName.values()) {
      bytes += engine.stateBytes();
    }
    return bytes;
  }
}
