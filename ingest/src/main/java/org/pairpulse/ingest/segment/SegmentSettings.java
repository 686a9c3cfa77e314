package org.pairpulse.ingest.segment;

import java.util.LinkedHashSet;
import java.util.List;
import java.util.Objects;
import java.util.regex.Pattern;
import org.pairpulse.sketch.engine.EngineConfig;

/**
 * Which basket attributes define segments, and how large a segment's state may grow.
 *
 * <p>A basket always counts in segment {@value #ALL}. For each configured attribute that the basket carries,
 * it also counts in segment {@code <attribute>=<value>} (for example {@code channel=app}), as long as the
 * value is a plain name ({@link #VALUE}) and the partition holds fewer than {@code maxValuesPerAttribute}
 * segments of that attribute, or already holds this one. Other values count only in {@value #ALL}; they are
 * counted in {@code pairpulse.ingest.segment.skipped} and logged once per attribute, never dropped silently.
 * Segments exist only for the configured attributes; no attribute value is kept otherwise.
 *
 * <p>Memory is fixed: per partition at most {@code 1 + attributes × maxValuesPerAttribute} engines, the
 * segment engines with {@link #segmentEngine}'s smaller tracked tables.
 *
 * @param attributes the basket attributes whose values are segments ({@code segments.attributes}), in order,
 *     each matching {@link #ATTRIBUTE}; empty: segment {@value #ALL} only
 * @param maxValuesPerAttribute most segments of one attribute per partition ({@code segments.max.values})
 * @param trackedFraction the segment engines' tracked pair and item capacities as a fraction of the
 *     {@value #ALL} engine's ({@code segments.tracked.fraction}), in (0, 1]
 */
public record SegmentSettings(List<String> attributes, int maxValuesPerAttribute, double trackedFraction) {
  /** The segment of every basket. */
  public static final String ALL = "all";
  /** A segment attribute's name: a plain name of up to 32 characters. */
  public static final Pattern ATTRIBUTE = Pattern.compile("[A-Za-z0-9][A-Za-z0-9_.-]{0,31}");
  /** An attribute value that makes a segment: a plain name of up to 64 characters. */
  public static final Pattern VALUE = Pattern.compile("[A-Za-z0-9][A-Za-z0-9_.:+-]{0,63}");
  /** Smallest tracked capacity of a segment engine, whatever the fraction. */
  public static final int MIN_TRACKED = 64;
  /** Default of {@code segments.max.values}. */
  public static final int DEFAULT_MAX_VALUES = 32;
  /** Default of {@code segments.tracked.fraction}. */
  public static final double DEFAULT_TRACKED_FRACTION = 0.25;

  public SegmentSettings {
    Objects.requireNonNull(attributes, "attributes");
    attributes = List.copyOf(attributes);
    if (new LinkedHashSet<>(attributes).size() != attributes.size()) {
      throw new IllegalArgumentException("segment attributes named twice: " + attributes);
    }
    for (String attribute : attributes) {
      if (!ATTRIBUTE.matcher(attribute).matches()) {
        throw new IllegalArgumentException("'" + attribute + "' is not a segment attribute name (a letter or digit, then"
            + " letters, digits, '_', '.', '-'; at most 32 characters)");
      }
    }
    if (maxValuesPerAttribute < 1 || maxValuesPerAttribute > 1024) {
      throw new IllegalArgumentException("most segment values per attribute must be in 1..1024, got " + maxValuesPerAttribute);
    }
    if (!(trackedFraction > 0 && trackedFraction <= 1)) {
      throw new IllegalArgumentException("the segments' tracked fraction must be in (0, 1], got " + trackedFraction);
    }
  }

  /** No segment attributes: segment {@value #ALL} only. */
  public static SegmentSettings none() {
    return new SegmentSettings(List.of(), DEFAULT_MAX_VALUES, DEFAULT_TRACKED_FRACTION);
  }

  /** True when at least one attribute is configured. */
  public boolean enabled() {
    return !attributes.isEmpty();
  }

  /** Most engines one partition holds: {@value #ALL} plus every possible segment. */
  public int maxEnginesPerPartition() {
    return 1 + attributes.size() * maxValuesPerAttribute;
  }

  /** The name of the segment of {@code attribute} = {@code value}: {@code attribute=value}. */
  public static String name(String attribute, String value) {
    return attribute + "=" + value;
  }

  /** The attribute of a segment name ({@code attribute=value}), or null for {@value #ALL}. */
  public static String attributeOf(String segment) {
    int at = segment.indexOf('=');
    return at < 0 ? null : segment.substring(0, at);
  }

  /** Whether {@code value} may name a segment ({@link #VALUE}). */
  public static boolean validValue(String value) {
    return VALUE.matcher(value).matches();
  }

  /**
   * The configuration of every segment engine: {@code all}'s, with the tracked pair and item capacities
   * multiplied by {@code trackedFraction} (at least {@value #MIN_TRACKED}, at most the original). The sketches
   * keep their ε and δ, so a segment's error bound ε·W is relative to the segment's own W, which is smaller;
   * fewer tracked keys means statistics for the segment's strongest pairs only (those above W/capacity).
   */
  public EngineConfig segmentEngine(EngineConfig all) {
    return all.toBuilder()
        .trackedPairCapacity(scaled(all.trackedPairCapacity()))
        .trackedItemCapacity(scaled(all.trackedItemCapacity()))
        .build();
  }

  private int scaled(int capacity) {
    long scaled = Math.round(capacity * trackedFraction);
    return (int) Math.min(capacity, Math.max(Math.min(MIN_TRACKED, capacity), scaled));
  }
}
