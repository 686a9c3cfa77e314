package org.pairpulse.ingest.front;

import com.github.benmanes.caffeine.cache.Cache;
import com.github.benmanes.caffeine.cache.Caffeine;
import com.github.benmanes.caffeine.cache.Expiry;
import java.util.Map;
import java.util.function.BiConsumer;
import java.util.function.LongSupplier;

/**
 * The basket ids seen recently in one partition, for dropping re-deliveries (Caffeine).
 *
 * <p>The horizon is event time: an id is remembered until its partition's newest event time passes the
 * basket's own time plus {@code horizonMillis}. The cache's ticker is that event time, so expiry is as
 * deterministic as the input, and a restored window decides exactly as the original would. A size cap
 * ({@code maxIds}) bounds memory when the input outruns the horizon; while it binds, Caffeine's eviction
 * policy decides which ids are forgotten and detection becomes best effort (the metrics show it).
 * Maintenance runs on the caller's thread ({@code executor(Runnable::run)}): no background work.
 */
final class DedupeWindow {
  private final long horizonMillis;
  private final Cache<String, Long> seen;

  DedupeWindow(long horizonMillis, int maxIds, LongSupplier eventTimeMillis) {
    this.horizonMillis = horizonMillis;
    this.seen = Caffeine.newBuilder()
        .maximumSize(maxIds)
        .executor(Runnable::run)
        .ticker(() -> Math.max(0, eventTimeMillis.getAsLong()) * 1_000_000L)
        .expireAfter(new Expiry<String, Long>() {
          @Override
          public long expireAfterCreate(String id, Long basketMillis, long currentNanos) {
            long expiresAtMillis = basketMillis + horizonMillis;
            return Math.max(0, expiresAtMillis - currentNanos / 1_000_000L) * 1_000_000L;
          }

          @Override
          public long expireAfterUpdate(String id, Long basketMillis, long currentNanos, long currentDurationNanos) {
            return currentDurationNanos;
          }

          @Override
          public long expireAfterRead(String id, Long basketMillis, long currentNanos, long currentDurationNanos) {
            return currentDurationNanos;
          }
        })
        .build();
  }

  /** Records {@code id}; true if it was already remembered (a duplicate). */
  boolean seenBefore(String id, long basketMillis) {
    if (horizonMillis == 0) {
      return false;
    }
    return seen.asMap().putIfAbsent(id, basketMillis) != null;
  }

  /** True if {@code id} is remembered, without recording it. */
  boolean contains(String id) {
    return horizonMillis != 0 && seen.getIfPresent(id) != null;
  }

  /** Records {@code id} (a basket assembled from line items has closed). */
  void remember(String id, long basketMillis) {
    if (horizonMillis != 0) {
      seen.put(id, basketMillis);
    }
  }

  long size() {
    seen.cleanUp();
    return seen.estimatedSize();
  }

  /** Every remembered id with its basket time (after expiring what is due). */
  void forEach(BiConsumer<String, Long> action) {
    seen.cleanUp();
    for (Map.Entry<String, Long> e : seen.asMap().entrySet()) {
      action.accept(e.getKey(), e.getValue());
    }
  }
}
