package org.pairpulse.serve.internal;

import com.github.benmanes.caffeine.cache.Cache;
import com.github.benmanes.caffeine.cache.Caffeine;
import java.util.function.Supplier;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.wire.Json;

/**
 * Answers' JSON bytes by route, segment, table version and bound request ({@code serve.cache.entries} entries,
 * least recently used out; 0 switches it off). A new table version is a new key, so no entry is ever stale.
 */
final class ResponseCache {
  /** The request records of the query package are values, so equal requests share an entry. */
  record Key(String route, String segment, long version, Object request) {}

  private final Cache<Key, byte[]> cache;
  private final ServeMeters meters;

  ResponseCache(int entries, ServeMeters meters) {
    this.cache = entries == 0 ? null : Caffeine.newBuilder().maximumSize(entries).build();
    this.meters = meters;
  }

  byte[] get(Key key, Supplier<Object> compute) {
    if (cache == null) {
      meters.cacheMiss();
      return Json.bytes(compute.get());
    }
    byte[] hit = cache.getIfPresent(key);
    if (hit != null) {
      meters.cacheHit();
      return hit;
    }
    meters.cacheMiss();
    byte[] body = Json.bytes(compute.get());
    cache.put(key, body);
    return body;
  }
}
