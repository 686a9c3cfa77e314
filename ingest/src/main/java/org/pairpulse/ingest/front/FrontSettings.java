package org.pairpulse.ingest.front;

import java.time.Duration;

/**
 * What a {@link PartitionFront} accepts, remembers and assembles.
 *
 * @param allowedLatenessMillis how far behind its partition's newest event time an event may be and still
 *     count ({@code allowed.lateness.ms}); older events are dead letters with reason {@code late}
 * @param dedupeHorizonMillis how long, in event time, a basket id is remembered ({@code dedupe.horizon.ms})
 * @param dedupeMaxIds most basket ids remembered per partition ({@code dedupe.max.ids}); a safety cap
 * @param lineGapMillis a basket assembled from line items closes after this much event time without a new
 *     line ({@code line.gap.ms}), once the watermark passes
 * @param lineMaxAgeMillis ... or this long after its first line, whichever comes first ({@code line.max.age.ms})
 * @param maxOpenBaskets most baskets being assembled at once per partition ({@code line.max.open.baskets});
 *     beyond it the one closest to its deadline closes early
 * @param maxBasketItems most items of an assembled basket ({@code max.basket.items})
 */
public record FrontSettings(long allowedLatenessMillis, long dedupeHorizonMillis, int dedupeMaxIds,
    long lineGapMillis, long lineMaxAgeMillis, int maxOpenBaskets, int maxBasketItems) {

  public FrontSettings {
    if (allowedLatenessMillis < 0 || dedupeHorizonMillis < 0 || dedupeMaxIds < 0 || lineGapMillis < 0
        || lineMaxAgeMillis < 0 || maxOpenBaskets < 1 || maxBasketItems < 1) {
      throw new IllegalArgumentException("front settings must be non-negative (open baskets and items positive): " + this);
    }
  }

  /** Lateness 1 h, dedupe 1 h or 100,000 ids, line gap 30 min, line age 24 h, 100,000 open, 1,000 items. */
  public static FrontSettings defaults() {
    return new FrontSettings(Duration.ofHours(1).toMillis(), Duration.ofHours(1).toMillis(), 100_000,
        Duration.ofMinutes(30).toMillis(), Duration.ofHours(24).toMillis(), 100_000, 1000);
  }
}
