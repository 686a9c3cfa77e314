package org.pairpulse.sketch.engine;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Objects;
import java.util.Set;
import org.pairpulse.sketch.cms.CountMinSketch;
import org.pairpulse.sketch.cms.UpdateRule;
import org.pairpulse.sketch.horizon.HorizonKind;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.SizeClasses;

/**
 * Everything that fixes a {@link PairEngine}'s memory and behaviour. Two engines can merge only when
 * their configurations are equal.
 *
 * <table>
 *   <caption>Settings</caption>
 *   <tr><th>setting</th><th>default</th><th>meaning</th></tr>
 *   <tr><td>horizons</td><td>recent, day, baseline</td><td>the time weightings kept (see {@link HorizonSpec})</td></tr>
 *   <tr><td>burstHorizon</td><td>recent</td><td>a decay horizon: a key heavier than W/capacity in it enters the
 *       tracked table at once (a new pair enters within its first burst)</td></tr>
 *   <tr><td>trackingHalfLifeMillis</td><td>7 days</td><td>half-life of the weights that rank tracked keys
 *       (Space-Saving); long enough that pairs that matter in the long window stay, short enough that stale ones
 *       leave</td></tr>
 *   <tr><td>itemEpsilon / itemDelta</td><td>0.002 / 0.02</td><td>item count-min error and failure probability</td></tr>
 *   <tr><td>pairEpsilon / pairDelta</td><td>0.001 / 0.02</td><td>pair count-min error and failure probability (each window pane)</td></tr>
 *   <tr><td>decayPairEpsilon</td><td>0.0001</td><td>pair count-min error of a decay horizon: one sketch, not one per pane,
 *       so it can afford to be wide; its estimates decide which pairs enter the tracked table, and a
 *       narrow one lets the long tail churn through it</td></tr>
 *   <tr><td>trackedPairCapacity</td><td>16384</td><td>pairs for which statistics are kept (Space-Saving capacity)</td></tr>
 *   <tr><td>trackedItemCapacity</td><td>8192</td><td>items counted exactly once admitted (every item in more than
 *       W/8192 of the item occurrences is tracked; the rest are read from the sketches)</td></tr>
 *   <tr><td>maxPairsPerBasket</td><td>256</td><td>pairs counted per basket before sampling with inverse-probability weights</td></tr>
 *   <tr><td>updateRule</td><td>LINEAR</td><td>count-min update rule; LINEAR keeps partitions mergeable</td></tr>
 *   <tr><td>seed</td><td>0x5EED</td><td>hash seed; equal seeds are needed to merge</td></tr>
 *   <tr><td>sizeClasses</td><td>1, 2, 3, 4–5, 6–9, 10–15, 16–24, 25–39, 40+</td><td>basket-size classes of the size-adjusted null model
 *       ({@link SizeClasses}): N and the tracked items' counts are kept per class; {@link SizeClasses#single()}
 *       turns the adjustment off (textbook measures)</td></tr>
 *   <tr><td>pairRanking</td><td>FRACTIONAL</td><td>how a pair occurrence weighs in the rank that decides which pairs are
 *       tracked ({@link PairRanking}): 1/(k − 1) in a basket of k items, so that large baskets do not crowd the table;
 *       COUNT ranks by frequency</td></tr>
 * </table>
 */
public record EngineConfig(
    List<HorizonSpec> horizons,
    String burstHorizon,
    long trackingHalfLifeMillis,
    double itemEpsilon,
    double itemDelta,
    double pairEpsilon,
    double pairDelta,
    double decayPairEpsilon,
    int trackedPairCapacity,
    int trackedItemCapacity,
    int maxPairsPerBasket,
    UpdateRule updateRule,
    long seed,
    SizeClasses sizeClasses,
    PairRanking pairRanking) {

  /** Name of the internal decay that ranks tracked keys (not published, reserved). */
  public static final String TRACKING_HORIZON_NAME = org.pairpulse.sketch.table.PairTable.TRACKING_HORIZON;

  /** Largest tracked capacity: keeps slot arithmetic in int range for every layout. */
  public static final int MAX_CAPACITY = 1 << 22;

  public EngineConfig {
    Objects.requireNonNull(horizons, "horizons");
    Objects.requireNonNull(updateRule, "updateRule");
    Objects.requireNonNull(sizeClasses, "sizeClasses");
    Objects.requireNonNull(pairRanking, "pairRanking");
    horizons = List.copyOf(horizons);
    if (horizons.isEmpty()) {
      throw new IllegalArgumentException("at least one horizon is needed");
    }
    Set<String> names = new HashSet<>();
    int cells = 1; // the tracking decay
    for (HorizonSpec h : horizons) {
      if (!names.add(h.name())) {
        throw new IllegalArgumentException("duplicate horizon name '" + h.name() + "'");
      }
      cells += h.paneCount();
    }
    if (names.contains(TRACKING_HORIZON_NAME)) {
      throw new IllegalArgumentException("horizon name '" + TRACKING_HORIZON_NAME + "' is reserved for the tracked tables");
    }
    HorizonSpec burst = horizons.stream().filter(h -> h.name().equals(burstHorizon)).findFirst()
        .orElseThrow(() -> new IllegalArgumentException("burstHorizon '" + burstHorizon
            + "' is not one of the horizons " + names));
    if (burst.kind() != HorizonKind.DECAY) {
      throw new IllegalArgumentException("burstHorizon '" + burstHorizon + "' must be a decay horizon");
    }
    if (trackingHalfLifeMillis < 1000) {
      throw new IllegalArgumentException("trackingHalfLifeMillis must be >= 1000, got " + trackingHalfLifeMillis);
    }
    CountMinSketch.widthFor(itemEpsilon);
    CountMinSketch.depthFor(itemDelta);
    CountMinSketch.widthFor(pairEpsilon);
    CountMinSketch.depthFor(pairDelta);
    CountMinSketch.widthFor(decayPairEpsilon);
    requireRange("trackedPairCapacity", trackedPairCapacity, 2, MAX_CAPACITY);
    requireRange("trackedItemCapacity", trackedItemCapacity, 2, MAX_CAPACITY);
    requireRange("maxPairsPerBasket", maxPairsPerBasket, 1, 1 << 20);
    if ((long) Math.max(trackedPairCapacity, trackedItemCapacity) * cells > Integer.MAX_VALUE - 8) {
      throw new IllegalArgumentException("tracked capacity × panes too large: " + cells + " cells");
    }
  }

  /** A configuration with the default size classes and pair ranking. */
  public EngineConfig(List<HorizonSpec> horizons, String burstHorizon, long trackingHalfLifeMillis, double itemEpsilon,
      double itemDelta, double pairEpsilon, double pairDelta, double decayPairEpsilon, int trackedPairCapacity,
      int trackedItemCapacity, int maxPairsPerBasket, UpdateRule updateRule, long seed) {
    this(horizons, burstHorizon, trackingHalfLifeMillis, itemEpsilon, itemDelta, pairEpsilon, pairDelta, decayPairEpsilon,
        trackedPairCapacity, trackedItemCapacity, maxPairsPerBasket, updateRule, seed, SizeClasses.defaults(),
        PairRanking.FRACTIONAL);
  }

  private static void requireRange(String name, int value, int min, int max) {
    if (value < min || value > max) {
      throw new IllegalArgumentException(name + " must be in " + min + ".." + max + ", got " + value);
    }
  }

  /** The defaults of the table above. */
  public static EngineConfig defaults() {
    return builder().build();
  }

  public static Builder builder() {
    return new Builder();
  }

  public Builder toBuilder() {
    return new Builder().horizons(horizons).burstHorizon(burstHorizon).trackingHalfLifeMillis(trackingHalfLifeMillis)
        .itemError(itemEpsilon, itemDelta).pairError(pairEpsilon, pairDelta).decayPairEpsilon(decayPairEpsilon)
        .trackedPairCapacity(trackedPairCapacity).trackedItemCapacity(trackedItemCapacity)
        .maxPairsPerBasket(maxPairsPerBasket).updateRule(updateRule).seed(seed).sizeClasses(sizeClasses)
        .pairRanking(pairRanking);
  }

  /** The internal decay horizon that ranks tracked keys. */
  public HorizonSpec trackingSpec() {
    return HorizonSpec.decay(TRACKING_HORIZON_NAME, java.time.Duration.ofMillis(trackingHalfLifeMillis));
  }

  /** Builder with the defaults preset. */
  public static final class Builder {
    private List<HorizonSpec> horizons = HorizonSpec.defaults();
    private String burstHorizon = HorizonSpec.RECENT.name();
    private long trackingHalfLifeMillis = java.time.Duration.ofDays(7).toMillis();
    private double itemEpsilon = 0.002;
    private double itemDelta = 0.02;
    private double pairEpsilon = 0.001;
    private double pairDelta = 0.02;
    private double decayPairEpsilon = 0.0001;
    private int trackedPairCapacity = 16_384;
    private int trackedItemCapacity = 8_192;
    private int maxPairsPerBasket = 256;
    private UpdateRule updateRule = UpdateRule.LINEAR;
    private long seed = 0x5EEDL;
    private SizeClasses sizeClasses = SizeClasses.defaults();
    private PairRanking pairRanking = PairRanking.FRACTIONAL;

    public Builder horizons(List<HorizonSpec> value) {
      this.horizons = new ArrayList<>(value);
      return this;
    }

    public Builder burstHorizon(String value) {
      this.burstHorizon = value;
      return this;
    }

    /** Same as {@link #burstHorizon}. */
    public Builder trackingHorizon(String value) {
      return burstHorizon(value);
    }

    public Builder trackingHalfLifeMillis(long value) {
      this.trackingHalfLifeMillis = value;
      return this;
    }

    public Builder itemError(double epsilon, double delta) {
      this.itemEpsilon = epsilon;
      this.itemDelta = delta;
      return this;
    }

    public Builder pairError(double epsilon, double delta) {
      this.pairEpsilon = epsilon;
      this.pairDelta = delta;
      return this;
    }

    public Builder decayPairEpsilon(double value) {
      this.decayPairEpsilon = value;
      return this;
    }

    public Builder trackedPairCapacity(int value) {
      this.trackedPairCapacity = value;
      return this;
    }

    public Builder trackedItemCapacity(int value) {
      this.trackedItemCapacity = value;
      return this;
    }

    public Builder maxPairsPerBasket(int value) {
      this.maxPairsPerBasket = value;
      return this;
    }

    public Builder updateRule(UpdateRule value) {
      this.updateRule = value;
      return this;
    }

    public Builder seed(long value) {
      this.seed = value;
      return this;
    }

    public Builder sizeClasses(SizeClasses value) {
      this.sizeClasses = value;
      return this;
    }

    public Builder pairRanking(PairRanking value) {
      this.pairRanking = value;
      return this;
    }

    public EngineConfig build() {
      return new EngineConfig(horizons, burstHorizon, trackingHalfLifeMillis, itemEpsilon, itemDelta, pairEpsilon, pairDelta,
          decayPairEpsilon, trackedPairCapacity, trackedItemCapacity, maxPairsPerBasket, updateRule, seed, sizeClasses,
          pairRanking);
    }
  }
}
