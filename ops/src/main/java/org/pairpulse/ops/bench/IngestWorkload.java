package org.pairpulse.ops.bench;

import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * The benchmark's basket stream: plain JSON basket records {@code {"id":"b<n>","time":<ms>,"items":[...]}},
 * 1 + Poisson(mean − 1) items per basket (mean {@code meanItems}), items drawn from a Zipf distribution over
 * a catalog of {@code catalogSize} ids, event times spread evenly over {@code spanMillis}. Seeded and
 * deterministic; not thread-safe.
 */
final class IngestWorkload {
  private final String[] catalog;
  private final double[] cdf;
  private final SplittableRandom random;
  private final double poissonMean;
  private final long startMillis;
  private final double millisPerBasket;
  private final StringBuilder json = new StringBuilder(128);
  private long next;

  IngestWorkload(int catalogSize, double zipfExponent, double meanItems, long startMillis, long spanMillis, long baskets,
      long seed) {
    this.catalog = new String[catalogSize];
    this.cdf = new double[catalogSize];
    double sum = 0;
    for (int i = 0; i < catalogSize; i++) {
      catalog[i] = "item-" + i;
      sum += 1.0 / Math.pow(i + 1, zipfExponent);
      cdf[i] = sum;
    }
    for (int i = 0; i < catalogSize; i++) {
      cdf[i] /= sum;
    }
    this.random = new SplittableRandom(seed);
    this.poissonMean = meanItems - 1;
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
    int size = 1 + poisson();
    for (int k = 0; k < size; k++) {
      if (k > 0) {
        json.append(',');
      }
      json.append('"').append(catalog[zipf()]).append('"');
    }
    json.append("]}");
    return json.toString().getBytes(StandardCharsets.ISO_8859_1);
  }

  private int zipf() {
    int index = Arrays.binarySearch(cdf, random.nextDouble());
    return Math.min(index < 0 ? -index - 1 : index, cdf.length - 1);
  }

  /** Knuth's multiplication method; fine for a small mean. */
  private int poisson() {
    double limit = Math.exp(-poissonMean);
    double product = random.nextDouble();
    int k = 0;
    while (product > limit && k < 40) {
      product *= random.nextDouble();
      k++;
    }
    return k;
  }
}
