package org.pairpulse.ops.tools.drift;

import java.util.Objects;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.serve.floor.PairKey;

/**
 * One planted fact of a drift stream: its shape and its ground truth as a {@link PlantedPair} (kind, items, the
 * interval in which the planted association holds, expected lifts).
 *
 * @param shape the change shape
 * @param pair the ground truth (one item for {@link PlantedKind#NOISE_POPULARITY})
 */
public record DriftPlant(DriftShape shape, PlantedPair pair) {
  public DriftPlant {
    Objects.requireNonNull(shape, "shape");
    Objects.requireNonNull(pair, "pair");
  }

  /** Whether this is a planted change a detector should alert on (emerging or fading). */
  public boolean isChange() {
    return pair.kind() == PlantedKind.EMERGING || pair.kind() == PlantedKind.FADING;
  }

  /** The change time: an emerging pair's start, a fading pair's end. */
  public long changeMillis() {
    if (!isChange()) {
      throw new IllegalStateException(shape + " is not a change");
    }
    return pair.kind() == PlantedKind.EMERGING ? pair.startMillis() : pair.endMillis();
  }

  /** The pair key, or null for a one-item plant. */
  public PairKey key() {
    return pair.items().size() == 2 ? PairKey.of(pair.items().get(0), pair.items().get(1)) : null;
  }

  /** Whether an alert on {@code key} concerns this plant: its pair, or any pair with its single item. */
  public boolean concerns(PairKey key) {
    if (pair.items().size() == 2) {
      return pair.isPair(key.first(), key.second());
    }
    String item = pair.items().get(0);
    return key.first().equals(item) || key.second().equals(item);
  }
}
