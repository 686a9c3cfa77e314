package org.pairpulse.ops.tools.bench;

import io.micrometer.core.instrument.Timer;
import java.io.PrintWriter;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.PairTables;
import org.pairpulse.sketch.fixtures.BasketSizes;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ZipfSampler;
import org.pairpulse.sketch.table.PairTable;
import org.pairpulse.sketch.table.PairTableHolder;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench serve}: suggestion latency over HTTP against the server's own floor, while
 * the state is being updated at full speed.
 *
 * <ol>
 *   <li>State: a {@link PairEngine} ({@code trackedPairCapacity} 262,144) over a 10,000-item Zipf
 *       catalog in which the {@code --planted-rules} most popular items each pull one partner into a basket with
 *       probability 0.45 (inside the default confidence band, so that suggestion lists are not empty: on
 *       independent items the offer screen rightly lists nothing, and the bench would time empty answers),
 *       preloaded, then fed at full speed by a feeder thread calling
 *       {@link PairEngine#addBasket} for the whole run; the same thread refreshes a pair table every 2 s
 *       (the engine is single-writer) and publishes it into a {@link PairTableHolder}. The ingest
 *       pipeline (Kafka) is not used: this measures serving while the state changes under it.</li>
 *   <li>Server: {@link ServeServer} on 127.0.0.1 (an ephemeral port), defaults except the cohort floor:
 *       0 by default, so that every tracked pair is served (the default 50 hides most pairs of this
 *       synthetic table, whose long tail is thin, and would make the table, and suggestions, smaller).</li>
 *   <li>Load: a closed loop of {@code --clients} threads with one JDK HttpClient (HTTP/1.1, loopback),
 *       in alternating blocks: {@code GET /api/v1/status} (the floor: same server, same client, same
 *       threads) and {@code GET /api/v1/suggestions} for 5-item baskets drawn afresh for every request from
 *       the same Zipf catalog (so the per-version response cache rarely helps; its hit rate is printed),
 *       {@code --requests} of each, after {@code --warmup-requests} of each.</li>
 * </ol>
 * Last line: {@code RESULT serve rps=<n> p50_us=<n> p99_us=<n> floor_p99_us=<n> ratio_p99=<x>} where rps,
 * p50 and p99 are the suggestions' (client-side, request to full response), floor_p99 the status
 * endpoint's, ratio_p99 = p99 / floor_p99. Bounded by {@code --max-seconds}; about two minutes here.
 * Run: {@code ops/pairpulse bench serve}.
 */
@Command(name = "serve", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Benchmarks serving: suggestion requests for 5-item baskets over HTTP against a pair table of about 200,000"
            + " tracked pairs (10,000-item catalog) while a feeder thread updates the engine at full speed, and the"
            + " same load against the status endpoint as the floor.",
        "Prints progress, then one line:",
        "RESULT serve rps=<n> p50_us=<n> p99_us=<n> floor_p99_us=<n> ratio_p99=<x>",
        "About two minutes with the defaults."})
public final class ServeBench implements Callable<Integer> {
  @Mixin
  BenchMixin bench;

  @Option(names = "--catalog-items", paramLabel = "N", description = "Items in the catalog (default: ${DEFAULT-VALUE}).")
  int catalogItems = 10_000;

  @Option(names = "--zipf", paramLabel = "X", description = "Zipf exponent of item popularity (default: ${DEFAULT-VALUE}).")
  double zipf = 1.0;

  @Option(names = "--tracked-pairs", paramLabel = "N",
      description = "trackedPairCapacity of the engine (default: ${DEFAULT-VALUE}).")
  int trackedPairs = 262_144;

  @Option(names = "--planted-rules", paramLabel = "N",
      description = "Most popular items that each pull one partner into a basket with probability 0.45"
          + " (default: ${DEFAULT-VALUE}).")
  int plantedRules = 1_000;

  @Option(names = "--preload-baskets", paramLabel = "N",
      description = "Baskets fed before the load starts (default: ${DEFAULT-VALUE}).")
  int preloadBaskets = 400_000;

  @Option(names = "--basket-items", paramLabel = "N",
      description = "Items per suggestion request (default: ${DEFAULT-VALUE}).")
  int basketItems = 5;

  @Option(names = "--requests", paramLabel = "N",
      description = "Measured requests of each kind (default: ${DEFAULT-VALUE}).")
  int requests = 40_000;

  @Option(names = "--warmup-requests", paramLabel = "N",
      description = "Warm-up requests of each kind (default: ${DEFAULT-VALUE}).")
  int warmupRequests = 5_000;

  @Option(names = "--clients", paramLabel = "N", description = "Client threads (default: ${DEFAULT-VALUE}).")
  int clients = 4;

  @Option(names = "--refresh-millis", paramLabel = "MS",
      description = "Pair-table refresh interval of the feeder (default: ${DEFAULT-VALUE}).")
  long refreshMillis = 2000;

  @Option(names = "--cohort-floor", paramLabel = "N",
      description = "serve.cohort.floor (default: ${DEFAULT-VALUE}; see the command's class comment).")
  double cohortFloor = 0;

  @Option(names = "--max-seconds", paramLabel = "S",
      description = "Stop measuring this long after the start and report what was measured (default: ${DEFAULT-VALUE}).")
  int maxSeconds = 220;

  @Option(names = "--seed", paramLabel = "N", description = "Random seed (default: ${DEFAULT-VALUE}).")
  long seed = 42;

  /** One measured block's latencies and duration. */
  /** The planted rules' confidence: inside the default band 0.30–0.60. */
  private static final double PLANTED_CONFIDENCE = 0.45;

  private record Block(long[] nanos, long wallNanos, long nonEmpty, long errors) {}

  @Override
  public Integer call() throws Exception {
    validate();
    PrintWriter out = bench.out();
    long runStart = System.nanoTime();
    long deadline = runStart + TimeUnit.SECONDS.toNanos(maxSeconds);
    String[] names = Catalog.names(catalogItems);
    ZipfSampler zipf = new ZipfSampler(catalogItems, this.zipf);
    EngineConfig engineConfig = EngineConfig.builder().trackedPairCapacity(trackedPairs).build();
    PairEngine engine = new PairEngine(engineConfig);
    out.printf(Locale.ROOT, "serve bench: %,d-item catalog (Zipf %.2f), trackedPairCapacity %,d, %d-item baskets,"
        + " %d client threads, loopback HTTP/1.1 (JDK HttpClient)%n", catalogItems, this.zipf, trackedPairs, basketItems,
        clients);
    out.println("ingest path: a feeder thread calling PairEngine.addBasket at full speed and refreshing every "
        + refreshMillis + " ms (the Kafka ingest pipeline is not part of this benchmark)");
    out.flush();

    BasketStream.Builder stream = BasketStream.builder(seed).zipf(names, zipf).sizes(BasketSizes.uniform(1, 8))
        .draws(BasketStream.Draws.INDEPENDENT);
    for (int rank = 0; rank < plantedRules; rank++) { // item i pulls in an item of the catalog's other half
      stream.join(new BasketStream.Join(names[rank], names[catalogItems / 2 + rank % (catalogItems / 2)],
          PLANTED_CONFIDENCE));
    }
    Feeder feeder = new Feeder(engine, stream.build(), refreshMillis);
    long preloadStart = System.nanoTime();
    feeder.feed(preloadBaskets);
    PairTableHolder holder = new PairTableHolder();
    feeder.holder = holder;
    feeder.publish();
    out.printf(Locale.ROOT, "preload: %,d baskets in %.1f s; table v%d: %,d tracked pairs, refresh %.0f ms%n",
        preloadBaskets, (System.nanoTime() - preloadStart) / 1e9, holder.current().version(),
        holder.current().pairCount(), feeder.lastRefreshMillis);
    out.flush();

    ServeConfig config = ServeConfig.defaults().with(ServeConfig.HOST, "127.0.0.1").with(ServeConfig.PORT, 0)
        .with(ServeConfig.COHORT_FLOOR, cohortFloor).with(ServeConfig.MAX_COUNT, 100);
    try (ServeServer server = ServeServer.builder().config(config).segment("all", holder)
        .horizons(engineConfig.horizons()).sketchHealth(feeder.health::get).build().start()) {
      feeder.refreshTimer = ServeMeters.refreshTimer(server.registry());
      out.printf(Locale.ROOT, "server: %s, cohort floor %.0f, %,d pair statistics published over %d horizons%n",
          server.uri(), cohortFloor, server.view("all").publishedPairs(), server.view("all").horizonNames().size());
      out.flush();
      Thread feederThread = new Thread(feeder, "bench-feeder");
      feederThread.setDaemon(true);
      feederThread.start();

      URI status = server.uri().resolve("/api/v1/status");
      URI base = server.uri();
      RequestSource statusLoad = worker -> () -> status;
      RequestSource basketLoad = worker -> {
        SplittableRandom random = new SplittableRandom(seed + 1 + worker * 7919L + System.nanoTime());
        BasketStream requests = BasketStream.builder(random).zipf(names, zipf)
            .sizes(BasketSizes.uniform(basketItems, basketItems)).build();
        return () -> base.resolve("/api/v1/suggestions?items=" + String.join(",", requests.basket(0L)));
      };
      HttpClient client = HttpClient.newBuilder().version(HttpClient.Version.HTTP_1_1)
          .connectTimeout(Duration.ofSeconds(5)).build();
      ExecutorService pool = Executors.newFixedThreadPool(clients);
      try {
        run(pool, client, statusLoad, warmupRequests, deadline);
        run(pool, client, basketLoad, warmupRequests, deadline);
        out.println("warm-up done: " + warmupRequests + " requests of each kind");
        out.flush();
        List<Block> floor = new ArrayList<>();
        List<Block> suggest = new ArrayList<>();
        int rounds = 4;
        long basketsBefore = feeder.baskets.get();
        long loadStart = System.nanoTime();
        for (int round = 0; round < rounds && System.nanoTime() < deadline; round++) {
          floor.add(run(pool, client, statusLoad, requests / rounds, deadline));
          suggest.add(run(pool, client, basketLoad, requests / rounds, deadline));
        }
        double loadSeconds = (System.nanoTime() - loadStart) / 1e9;
        long fed = feeder.baskets.get() - basketsBefore;
        feeder.stop.set(true);
        feederThread.join(2_000); // a daemon: a refresh still running when the load ends is not waited for
        if (feeder.failure.get() != null) {
          throw new IllegalStateException("the feeder failed", feeder.failure.get());
        }
        long errors = floor.stream().mapToLong(Block::errors).sum() + suggest.stream().mapToLong(Block::errors).sum();
        if (errors > 0) {
          throw new IllegalStateException(errors + " requests failed");
        }
        long[] s = merge(suggest);
        long[] f = merge(floor);
        double suggestSeconds = suggest.stream().mapToLong(Block::wallNanos).sum() / 1e9;
        long nonEmpty = suggest.stream().mapToLong(Block::nonEmpty).sum();
        out.printf(Locale.ROOT, "during the load: feeder %,.0f baskets/s, %d refreshes (mean %.0f ms), table v%d with %,d"
            + " tracked pairs%n", fed / loadSeconds, feeder.refreshes.get(), feeder.meanRefreshMillis(),
            holder.current().version(), holder.current().pairCount());
        out.printf(Locale.ROOT, "status (floor):  n=%d p50=%d us p90=%d us p99=%d us max=%d us%n", f.length,
            micros(f, 0.50), micros(f, 0.90), micros(f, 0.99), f.length == 0 ? 0 : f[f.length - 1] / 1000);
        double hits = server.registry().get("pairpulse.response.cache").tag("result", "hit").counter().count();
        double misses = server.registry().get("pairpulse.response.cache").tag("result", "miss").counter().count();
        out.printf(Locale.ROOT, "suggestions:     n=%d p50=%d us p90=%d us p99=%d us max=%d us, %.0f rps,"
            + " %.0f%% answers non-empty, cache hit rate %.1f%%, server-side p99 %.0f us%n", s.length, micros(s, 0.50),
            micros(s, 0.90), micros(s, 0.99), s.length == 0 ? 0 : s[s.length - 1] / 1000, s.length / suggestSeconds,
            100.0 * nonEmpty / Math.max(1, s.length), 100.0 * hits / Math.max(1, hits + misses),
            serverP99(server));
        if (s.length < requests || f.length < requests) {
          out.println("note: stopped at --max-seconds before all requests were made");
        }
        long floorP99 = Math.max(1, micros(f, 0.99));
        out.printf(Locale.ROOT, "RESULT serve rps=%d p50_us=%d p99_us=%d floor_p99_us=%d ratio_p99=%.2f%n",
            Math.round(s.length / suggestSeconds), micros(s, 0.50), micros(s, 0.99), floorP99,
            (double) micros(s, 0.99) / floorP99);
        out.flush();
      } finally {
        feeder.stop.set(true);
        pool.shutdownNow();
      }
    }
    return 0;
  }

  private void validate() {
    if (catalogItems < 2 * basketItems || basketItems < 1 || requests < 4 || clients < 1 || warmupRequests < 0
        || trackedPairs < 2 || refreshMillis < 100 || maxSeconds < 10 || preloadBaskets < 1 || plantedRules < 0
        || plantedRules > catalogItems / 2) {
      throw bench.usage("options out of range (see --help)");
    }
  }

  /** Per client thread, a supplier of request URIs. */
  private interface RequestSource {
    java.util.function.Supplier<URI> forWorker(int worker);
  }

  /** {@code total} requests spread over the client threads; stops at the deadline. */
  private Block run(ExecutorService pool, HttpClient client, RequestSource source, int total, long deadline)
      throws Exception {
    int perClient = total / clients;
    List<Future<long[]>> futures = new ArrayList<>();
    AtomicLong nonEmpty = new AtomicLong();
    AtomicLong errors = new AtomicLong();
    long start = System.nanoTime();
    for (int c = 0; c < clients; c++) {
      java.util.function.Supplier<URI> uris = source.forWorker(c);
      futures.add(pool.submit(() -> {
        long[] nanos = new long[perClient];
        int done = 0;
        for (int i = 0; i < perClient && System.nanoTime() < deadline; i++) {
          HttpRequest request = HttpRequest.newBuilder(uris.get()).timeout(Duration.ofSeconds(30)).GET().build();
          long t0 = System.nanoTime();
          HttpResponse<String> response = client.send(request, HttpResponse.BodyHandlers.ofString());
          nanos[done++] = System.nanoTime() - t0;
          if (response.statusCode() != 200) {
            errors.incrementAndGet();
          } else if (!response.body().contains("\"suggestions\":[]")) {
            nonEmpty.incrementAndGet();
          }
        }
        return Arrays.copyOf(nanos, done);
      }));
    }
    List<long[]> parts = new ArrayList<>();
    for (Future<long[]> f : futures) {
      parts.add(f.get());
    }
    long wall = System.nanoTime() - start;
    int n = parts.stream().mapToInt(a -> a.length).sum();
    long[] all = new long[n];
    int at = 0;
    for (long[] part : parts) {
      System.arraycopy(part, 0, all, at, part.length);
      at += part.length;
    }
    return new Block(all, wall, nonEmpty.get(), errors.get());
  }

  /** Upper edge of the histogram bucket holding the server-side p99 of suggestions (warm-up included), in µs. */
  private static double serverP99(ServeServer server) {
    io.micrometer.core.instrument.distribution.HistogramSnapshot snapshot =
        server.registry().get("pairpulse.suggestion.latency").timer().takeSnapshot();
    double total = snapshot.count();
    for (io.micrometer.core.instrument.distribution.CountAtBucket bucket : snapshot.histogramCounts()) {
      if (bucket.count() >= 0.99 * total) {
        return bucket.bucket(TimeUnit.MICROSECONDS);
      }
    }
    return Double.NaN;
  }

  private static long[] merge(List<Block> blocks) {
    long[] all = blocks.stream().flatMapToLong(b -> Arrays.stream(b.nanos())).toArray();
    Arrays.sort(all);
    return all;
  }

  /** The q-quantile of sorted nanoseconds, in microseconds (nearest rank). */
  static long micros(long[] sorted, double q) {
    if (sorted.length == 0) {
      return 0;
    }
    int rank = (int) Math.ceil(q * sorted.length) - 1;
    return sorted[Math.max(0, Math.min(sorted.length - 1, rank))] / 1000;
  }

  /** The single writer of the engine: feeds baskets at full speed and refreshes on a timer. */
  private static final class Feeder implements Runnable {
    private final PairEngine engine;
    private final BasketStream stream;
    private final long refreshMillis;
    final AtomicBoolean stop = new AtomicBoolean();
    final AtomicLong baskets = new AtomicLong();
    final AtomicLong refreshes = new AtomicLong();
    final AtomicReference<Throwable> failure = new AtomicReference<>();
    final AtomicReference<SketchHealth> health = new AtomicReference<>(SketchHealth.unknown());
    private final AtomicLong refreshNanos = new AtomicLong();
    volatile PairTableHolder holder;
    volatile Timer refreshTimer;
    double lastRefreshMillis;
    private long eventMillis = 1_772_409_600_000L;
    private long version;

    Feeder(PairEngine engine, BasketStream stream, long refreshMillis) {
      this.engine = engine;
      this.stream = stream;
      this.refreshMillis = refreshMillis;
    }

    /** Adds {@code count} baskets of 1–8 Zipf items, 100 ms of event time apart. */
    void feed(int count) {
      for (int i = 0; i < count; i++) {
        engine.addBasket(eventMillis, stream.nextBasket());
        eventMillis += 100;
        baskets.incrementAndGet();
      }
    }

    void publish() {
      long start = System.nanoTime();
      PairTable table = engine.refresh(PairTables.Options.of(++version, System.currentTimeMillis()));
      health.set(SketchHealth.capture(engine));
      holder.publish(table);
      long took = System.nanoTime() - start;
      lastRefreshMillis = took / 1e6;
      refreshNanos.addAndGet(took);
      refreshes.incrementAndGet();
      Timer timer = refreshTimer;
      if (timer != null) {
        timer.record(took, TimeUnit.NANOSECONDS);
      }
    }

    double meanRefreshMillis() {
      return refreshes.get() == 0 ? 0 : refreshNanos.get() / 1e6 / refreshes.get();
    }

    @Override
    public void run() {
      try {
        refreshes.set(0);
        refreshNanos.set(0);
        long next = System.nanoTime() + TimeUnit.MILLISECONDS.toNanos(refreshMillis);
        while (!stop.get()) {
          feed(256);
          if (System.nanoTime() >= next) {
            publish();
            next = System.nanoTime() + TimeUnit.MILLISECONDS.toNanos(refreshMillis);
          }
        }
      } catch (Throwable t) {
        failure.set(t);
      }
    }
  }
}
