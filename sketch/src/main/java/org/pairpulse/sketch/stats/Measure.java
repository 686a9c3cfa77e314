package org.pairpulse.sketch.stats;

import java.util.Arrays;
import java.util.Objects;
import java.util.function.ToDoubleFunction;
import java.util.stream.Collectors;

/**
 * A pair measure by which pairs can be ranked, with a stable lower-case wire name (the serve
 * layer exposes these names; never rename one). Directed measures (confidence, conviction) read as
 * the larger of the two directions, so every measure is a property of the unordered pair.
 *
 * <p>The measures that compare with a null model ({@code lift}, {@code shrunk_lift}, {@code lift_lower},
 * {@code leverage}, {@code conviction}, {@code signed_root_g2}) are size-adjusted: expected counts are
 * taken within basket-size classes (see {@link PairMeasures}). Each has a textbook twin under plain
 * independence, named with the suffix {@value #UNADJUSTED_SUFFIX}.
 */
public enum Measure {
  SUPPORT("support", PairMeasures::support),
  CONFIDENCE("confidence", m -> Math.max(m.confidenceAB(), m.confidenceBA())),
  LIFT("lift", PairMeasures::lift),
  SHRUNK_LIFT("shrunk_lift", PairMeasures::shrunkLift),
  LIFT_LOWER("lift_lower", PairMeasures::liftLower),
  LEVERAGE("leverage", PairMeasures::leverage),
  CONVICTION("conviction", m -> Math.max(m.convictionAB(), m.convictionBA())),
  KULCZYNSKI("kulczynski", PairMeasures::kulczynski),
  SIGNED_ROOT_G2("signed_root_g2", PairMeasures::signedRootGSquared),
  // the textbook values under plain independence (no basket-size classes), by name
  LIFT_UNADJUSTED("lift_unadjusted", PairMeasures::liftUnadjusted),
  SHRUNK_LIFT_UNADJUSTED("shrunk_lift_unadjusted", PairMeasures::shrunkLiftUnadjusted),
  LIFT_LOWER_UNADJUSTED("lift_lower_unadjusted", PairMeasures::liftLowerUnadjusted),
  LEVERAGE_UNADJUSTED("leverage_unadjusted", PairMeasures::leverageUnadjusted),
  CONVICTION_UNADJUSTED("conviction_unadjusted",
      m -> Math.max(m.convictionABUnadjusted(), m.convictionBAUnadjusted())),
  SIGNED_ROOT_G2_UNADJUSTED("signed_root_g2_unadjusted", PairMeasures::signedRootGSquaredUnadjusted);

  /** Suffix of the textbook (plain independence) twin of a size-adjusted measure's wire name. */
  public static final String UNADJUSTED_SUFFIX = "_unadjusted";

  private final String wireName;
  private final ToDoubleFunction<PairMeasures> reader;

  Measure(String wireName, ToDoubleFunction<PairMeasures> reader) {
    this.wireName = wireName;
    this.reader = reader;
  }

  /** This measure's value in {@code measures} (NaN if either direction of a directed one is NaN). */
  public double of(PairMeasures measures) {
    return reader.applyAsDouble(Objects.requireNonNull(measures, "measures"));
  }

  /** Whether this is the textbook twin of a size-adjusted measure. */
  public boolean isUnadjusted() {
    return wireName.endsWith(UNADJUSTED_SUFFIX);
  }

  /**
   * This measure under plain independence: its {@code _unadjusted} twin, or itself when it reads no null model
   * (support, confidence, Kulczynski) or is a twin already.
   */
  public Measure unadjusted() {
    for (Measure measure : values()) {
      if (measure.wireName.equals(wireName + UNADJUSTED_SUFFIX)) {
        return measure;
      }
    }
    return this;
  }

  /** The stable lower-case name used on the wire, e.g. {@code "shrunk_lift"}. */
  public String wireName() {
    return wireName;
  }

  /**
   * The measure with this exact wire name.
   *
   * @throws IllegalArgumentException if no measure has that name; the message lists the valid
   *     names
   */
  public static Measure fromWireName(String wireName) {
    for (Measure measure : values()) {
      if (measure.wireName.equals(wireName)) {
        return measure;
      }
    }
    throw new IllegalArgumentException("unknown measure '" + wireName + "'; valid measures: "
        + Arrays.stream(values()).map(Measure::wireName).collect(Collectors.joining(", ")));
  }
}
