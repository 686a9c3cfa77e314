package org.pairpulse.ops.tools.bench;

import java.nio.charset.StandardCharsets;
import java.util.SplittableRandom;
import org.pairpulse.sketch.fixtures.BasketSizes;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ZipfSampler;

/**
 * The benchmark's basket stream: plain JSON basket records {@code {"id":"b<n>","time":<ms>,"items":[...]}},
 * 1 + Poisson(mean − 1) items per basket (mean {@code meanItems}, the shared {@link BasketSizes#poisson}), items
 * drawn by the shared {@link ZipfSampler} over a catalog of {@code catalogSize} ids (repeats kept in the record), event times spread evenly over {@code spanMillis}. Seeded and
 * deterministic; not thread-safe.
 */
final class IngestWorkload {
  private final String[] catalog;
  private final ZipfSampler zipf;
  private final BasketSizes sizes;
  private final SplittableRandom random;
  private final long startMillis;
  private final double millisPerBasket;
  private final StringBuilder json = new StringBuilder(128);
  private long next;

  IngestWorkload(int catalogSize, double zipfExponent, double meanItems, long startMillis, long spanMillis, long baskets,
      long seed) {
    this.catalog = BasketStream.numbered("item-", catalogSize);
    this.zipf = new ZipfSampler(catalogSize, zipfExponent);
    this.sizes = BasketSizes.poisson(meanItems, 40);
    this.random = new SplittableRandom(seed);
    this.startMillis = startMillis;
    this.millisPerBasket = (double) spanMillis / baskets;
  }

  /** The id (the record key) of the basket {@link #nextValue()} returns next. */
  String nextId() {
    return "b" + next;
  }

  /** The next record value (UTF-8 JSON); advances the stream. */
  byte[] nextValue() {
    long n = next++;
    json.setLength(0);
    json.append("{\"id\":\"b").append(n).append("\",\"time\":").append(startMillis + (long) (n * millisPerBasket))
        .append(",\"items\":[");
    int size = sizes.draw(random);
    for (int k = 0; k < size; k++) {
      if (k > 0) {
        json.append(',');
      }
      json.append('"').append(catalog[zipf.sample(random)]).append('"'); // a repeat stays: the decoder's to count once
    }
    json.append("]}");
    return json.toString().getBytes(StandardCharsets.ISO_8859_1);
  }
}
