package org.pairpulse.ops.tools.bench;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.UUID;
import java.util.concurrent.Callable;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.kafka.Ingestor;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.PairEngine;
import org.pairpulse.sketch.engine.Snapshots;
import org.pairpulse.sketch.time.EventClock;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench ingest}: how close the full ingest path comes to the pace of a bare Kafka consumer
 * on the same machine, same broker, same topic.
 *
 * <p>Run: {@code PAIRPULSE_JAVA_OPTS=-Xmx1g ops/pairpulse bench ingest} (the heap is capped so that the
 * state's fixed memory is tested too). Steps, all in one JVM with an in-process KRaft broker:
 * <ol>
 *   <li>produce {@code --baskets} plain JSON basket records (Zipf items, {@code --partitions} partitions);</li>
 *   <li>a bare consumer that only polls byte arrays (the floor);</li>
 *   <li>a consumer that polls and decodes every record to a basket (the least any user must do);</li>
 *   <li>the full ingest path ({@link Ingestor}: decode, checks, dedupe, per-partition engines with the
 *       default {@link EngineConfig}) until every basket is counted. Checkpoints and refreshes are off here
 *       ({@code checkpoint.store=none}, {@code refresh.interval.ms=0}); the cost of one checkpoint of the
 *       final state is printed separately;</li>
 *   <li>where the time goes, without Kafka on one thread: decode, front and engine per basket
 *       ({@code --stage-baskets});</li>
 *   <li>a stream {@code --long-factor} times longer through decode, front and engines (no Kafka), to show
 *       the state's bytes before and after; bounded by {@code --long-seconds}.</li>
 * </ol>
 * Each rate is records (or baskets) over the time from the first record polled to the last one handled.
 * The last line is {@code RESULT ingest baskets_per_s=.. bare_records_per_s=.. decode_records_per_s=..
 * ratio=.. state_bytes=..}.
 */
@Command(name = "ingest", mixinStandardHelpOptions = true,
    description = "Benchmark the Kafka ingest path against a bare consumer (in-process broker).")
public final class IngestBench implements Callable<Integer> {
  @Option(names = "--baskets", defaultValue = "2000000", description = "basket records in the topic (default ${DEFAULT-VALUE})")
  long baskets;

  @Option(names = "--partitions", defaultValue = "4", description = "partitions of the topic (default ${DEFAULT-VALUE})")
  int partitions;

  @Option(names = "--catalog", defaultValue = "10000", description = "distinct items (default ${DEFAULT-VALUE})")
  int catalog;

  @Option(names = "--zipf", defaultValue = "1.0", description = "Zipf exponent of item popularity (default ${DEFAULT-VALUE})")
  double zipf;

  @Option(names = "--mean-items", defaultValue = "4", description = "mean items per basket (default ${DEFAULT-VALUE})")
  double meanItems;

  @Option(names = "--long-factor", defaultValue = "10", description = "length of the long stream in --baskets (0: skip)")
  int longFactor;

  @Option(names = "--long-seconds", defaultValue = "210", description = "time bound of the long stream (default ${DEFAULT-VALUE})")
  long longSeconds;

  @Option(names = "--stage-baskets", defaultValue = "500000",
      description = "baskets of the per-stage breakdown without Kafka (default ${DEFAULT-VALUE})")
  long stageBaskets;

  @Option(names = "--engine-threads", defaultValue = "2",
      description = "engine lanes of the full path (ingest's engine.threads; default ${DEFAULT-VALUE}, one per core here)")
  int engineThreads;

  @Option(names = "--seed", defaultValue = "20261202", description = "workload seed")
  long seed;

  private static final long DAY = 86_400_000L;
  /**
   * Without Kafka, consecutive baskets go to one partition's front and engine in runs of this many, as a poll
   * hands the engine thread a batch per partition (one basket each in turn would make the engines' sketches
   * compete for the caches, which the real path does not do).
   */
  private static final int PARTITION_RUN = 1000;

  @Override
  public Integer call() throws Exception {
    long start = System.nanoTime();
    long t0 = System.currentTimeMillis() - 2 * DAY;
    String topic = "bench-baskets";
    say("heap max %d MB, %d cores", Runtime.getRuntime().maxMemory() >> 20, Runtime.getRuntime().availableProcessors());
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().build().start()) {
      say("broker %s up after %.1f s", broker.bootstrapServers(), seconds(start));
      broker.createTopic(topic, partitions);
      produce(broker, topic, t0);

      double bare = consume(broker, topic, false);
      say("bare consumer: %,.0f records/s", bare);
      double decode = consume(broker, topic, true);
      say("poll + decode: %,.0f records/s", decode);

      Map<String, Object> props = new HashMap<>();
      props.put(IngestConfig.BOOTSTRAP_SERVERS, broker.bootstrapServers());
      props.put(IngestConfig.TOPICS, topic);
      props.put(IngestConfig.GROUP_ID, "bench-" + UUID.randomUUID());
      props.put(IngestConfig.CHECKPOINT_STORE, "none");
      props.put(IngestConfig.REFRESH_INTERVAL_MS, "0");
      props.put(IngestConfig.ENGINE_THREADS, String.valueOf(engineThreads));
      SimpleMeterRegistry registry = new SimpleMeterRegistry();
      double basketsPerSecond;
      long stateBytes;
      try (Ingestor ingestor = new Ingestor(new IngestConfig(props), EngineConfig.defaults(), registry, EventClock.system())
          .start()) {
        long begin = 0;
        long lastReport = System.nanoTime();
        while (ingestor.metrics().basketCount() < baskets) {
          if (ingestor.failure() != null) {
            throw new IllegalStateException("ingest failed", ingestor.failure());
          }
          if (begin == 0 && ingestor.metrics().recordCount() > 0) {
            begin = System.nanoTime();
          }
          if (System.nanoTime() - lastReport > TimeUnit.SECONDS.toNanos(5)) {
            lastReport = System.nanoTime();
            say("  full path: %,.0f of %,d baskets counted", ingestor.metrics().basketCount(), baskets);
          }
          Thread.sleep(1); // completion polling; the measured work runs on the ingest threads
        }
        double elapsed = (System.nanoTime() - begin) / 1e9;
        basketsPerSecond = baskets / elapsed;
        stateBytes = (long) registry.get("pairpulse.ingest.state.bytes").gauge().value();
        say("full ingest path (engine.threads=%d): %,.0f baskets/s (%,d baskets in %.1f s), state %,d bytes in %d partition engines",
            engineThreads, basketsPerSecond, baskets, elapsed, stateBytes, partitions);
        PairEngine view = ingestor.view().get(120, TimeUnit.SECONDS);
        long snapStart = System.nanoTime();
        byte[] snapshot = Snapshots.write(view);
        say("one snapshot of the merged state: %,d bytes in %.0f ms; pairs counted %,d, tracked %,d",
            snapshot.length, (System.nanoTime() - snapStart) / 1e6, view.stats().pairUpdates(), view.stats().trackedPairs());
      }
      stages(System.currentTimeMillis() - 2 * DAY);
      if (longFactor > 0) {
        longStream(System.currentTimeMillis() - (longFactor + 1L) * DAY);
      }
      double ratio = basketsPerSecond / bare;
      say("total %.0f s", seconds(start));
      System.out.printf(Locale.ROOT, "RESULT ingest baskets_per_s=%d bare_records_per_s=%d decode_records_per_s=%d ratio=%.3f state_bytes=%d%n",
          Math.round(basketsPerSecond), Math.round(bare), Math.round(decode), ratio, stateBytes);
    }
    return 0;
  }

  private void produce(EmbeddedKafkaBroker broker, String topic, long t0) {
    Map<String, Object> p = new HashMap<>();
    p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
    p.put(ProducerConfig.LINGER_MS_CONFIG, 10);
    p.put(ProducerConfig.BATCH_SIZE_CONFIG, 256 * 1024);
    p.put(ProducerConfig.ACKS_CONFIG, "1");
    p.put(ProducerConfig.BUFFER_MEMORY_CONFIG, 64L << 20);
    p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
    IngestWorkload workload = new IngestWorkload(catalog, zipf, meanItems, t0, DAY, baskets, seed);
    long begin = System.nanoTime();
    long bytes = 0;
    try (KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p)) {
      for (long i = 0; i < baskets; i++) {
        byte[] key = workload.nextId().getBytes(StandardCharsets.ISO_8859_1);
        byte[] value = workload.nextValue();
        bytes += value.length;
        producer.send(new ProducerRecord<>(topic, key, value));
        if ((i + 1) % (baskets / 4) == 0) {
          say("  produced %,d records", i + 1);
        }
      }
      producer.flush();
    }
    say("produced %,d records (mean %.0f bytes) in %.1f s", baskets, (double) bytes / baskets, seconds(begin));
  }

  /** Polls the whole topic once; returns records per second (from the first record to the last). */
  private double consume(EmbeddedKafkaBroker broker, String topic, boolean decode) throws InvalidEventException {
    Map<String, Object> c = new HashMap<>();
    c.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
    c.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
    c.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 2000);
    c.put(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, 4 << 20);
    c.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    c.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
    EventDecoder decoder = new EventDecoder(EventLimits.defaults());
    long records = 0;
    long items = 0;
    long begin = 0;
    try (KafkaConsumer<byte[], byte[]> consumer = new KafkaConsumer<>(c)) {
      List<TopicPartition> parts = new ArrayList<>();
      for (int p = 0; p < partitions; p++) {
        parts.add(new TopicPartition(topic, p));
      }
      consumer.assign(parts);
      consumer.seekToBeginning(parts);
      long deadline = System.nanoTime() + TimeUnit.MINUTES.toNanos(5);
      while (records < baskets) {
        if (System.nanoTime() > deadline) {
          throw new IllegalStateException("consumer read only " + records + " records in 5 minutes");
        }
        ConsumerRecords<byte[], byte[]> polled = consumer.poll(Duration.ofMillis(100));
        if (begin == 0 && !polled.isEmpty()) {
          begin = System.nanoTime();
        }
        for (ConsumerRecord<byte[], byte[]> r : polled) {
          if (decode) {
            BasketEvent event = decoder.decode(r.value(), r.headers());
            items += ((org.pairpulse.ingest.event.Basket) event).items().size();
          } else {
            items += r.value().length;
          }
        }
        records += polled.count();
      }
    }
    double elapsed = (System.nanoTime() - begin) / 1e9;
    say("  %s: %,d records in %.2f s (checksum %d)", decode ? "decode" : "bare", records, elapsed, items);
    return records / elapsed;
  }

  /**
   * Where a basket's time goes, without Kafka, one thread: the same records decoded only, then decoded and
   * passed through the partition fronts (checks, dedupe, watermark), then also counted by the engines. Each
   * stage's cost is the difference of two passes, in microseconds per basket; the slowest stage bounds the
   * full path (the consumer thread decodes and runs the fronts, the engine thread counts).
   */
  private void stages(long t0) throws InvalidEventException {
    int n = (int) Math.min(baskets, stageBaskets);
    IngestWorkload workload = new IngestWorkload(catalog, zipf, meanItems, t0, DAY, n, seed + 2);
    byte[][] values = new byte[n][];
    for (int i = 0; i < n; i++) {
      workload.nextId();
      values[i] = workload.nextValue();
    }
    EventDecoder decoder = new EventDecoder(EventLimits.defaults());
    double[] micros = new double[3];
    for (int pass = 0; pass < 3; pass++) {
      PairEngine[] engines = new PairEngine[partitions];
      PartitionFront[] fronts = new PartitionFront[partitions];
      for (int p = 0; p < partitions; p++) {
        engines[p] = pass == 2 ? new PairEngine(EngineConfig.defaults()) : null;
        fronts[p] = new PartitionFront(FrontSettings.defaults());
      }
      long[] counted = new long[1];
      long begin = System.nanoTime();
      for (int i = 0; i < n; i++) {
        BasketEvent event = decoder.decode(values[i], null);
        int p = (i / PARTITION_RUN) % partitions;
        if (pass == 0) {
          counted[0] += ((org.pairpulse.ingest.event.Basket) event).items().size();
          continue;
        }
        PairEngine engine = engines[p];
        fronts[p].accept(event, (id, t, items) -> {
          if (engine != null) {
            engine.addBasket(t, items);
          }
          counted[0]++;
        });
      }
      micros[pass] = (System.nanoTime() - begin) / 1e3 / n;
      say("  stage pass %d (%s): %.2f us per basket (checksum %d)", pass + 1,
          new String[] {"decode", "decode + front", "decode + front + engine"}[pass], micros[pass], counted[0]);
    }
    say("per basket, one thread, no Kafka: decode %.2f us, front %.2f us, engine %.2f us (engine alone %,.0f baskets/s)",
        micros[0], micros[1] - micros[0], micros[2] - micros[1], 1e6 / Math.max(1e-9, micros[2] - micros[1]));
  }

  /** A stream longFactor times longer through decode, front and engine (no Kafka): state bytes before and after. */
  private void longStream(long t0) throws InvalidEventException {
    long total = baskets * longFactor;
    IngestWorkload workload = new IngestWorkload(catalog, zipf, meanItems, t0, DAY * longFactor, total, seed + 1);
    EventDecoder decoder = new EventDecoder(EventLimits.defaults());
    FrontSettings settings = FrontSettings.defaults();
    PairEngine[] engines = new PairEngine[partitions];
    PartitionFront[] fronts = new PartitionFront[partitions];
    for (int p = 0; p < partitions; p++) {
      engines[p] = new PairEngine(EngineConfig.defaults());
      fronts[p] = new PartitionFront(settings);
    }
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(longSeconds);
    long begin = System.nanoTime();
    long beforeState = -1;
    long beforeHeap = -1;
    long done = 0;
    long rejected = 0;
    for (; done < total && System.nanoTime() < deadline; done++) {
      int p = (int) ((done / PARTITION_RUN) % partitions);
      workload.nextId();
      BasketEvent event;
      try {
        event = decoder.decode(workload.nextValue(), null);
      } catch (InvalidEventException e) {
        rejected++;
        continue;
      }
      PairEngine engine = engines[p];
      fronts[p].accept(event, (id, t, items) -> engine.addBasket(t, items.toArray(new String[0])));
      if (done + 1 == baskets) {
        beforeState = stateBytes(engines);
        beforeHeap = heapAfterGc();
        say("long stream: after %,d baskets state %,d bytes, heap after GC %,d MB", done + 1, beforeState, beforeHeap >> 20);
      }
    }
    long afterState = stateBytes(engines);
    long afterHeap = heapAfterGc();
    double factor = (double) done / baskets;
    say("long stream: after %,d baskets (%.1fx, %.0f s, %,.0f baskets/s without Kafka) state %,d bytes (before %,d), "
        + "heap after GC %,d MB (before %,d MB)%s", done, factor, seconds(begin), done / seconds(begin), afterState, beforeState,
        afterHeap >> 20, beforeHeap >> 20, done < total ? "; stopped by --long-seconds" : "");
    if (rejected > 0) {
      say("long stream: %,d records rejected by the decoder", rejected);
    }
  }

  private static long stateBytes(PairEngine[] engines) {
    long sum = 0;
    for (PairEngine e : engines) {
      sum += e.stateBytes();
    }
    return sum;
  }

  private static long heapAfterGc() {
    System.gc();
    Runtime rt = Runtime.getRuntime();
    return rt.totalMemory() - rt.freeMemory();
  }

  private static double seconds(long sinceNanos) {
    return (System.nanoTime() - sinceNanos) / 1e9;
  }

  private static void say(String format, Object... args) {
    System.out.printf(Locale.ROOT, "bench ingest: " + format + "%n", args);
    System.out.flush();
  }

  /** Runs the benchmark alone (before the CLI registers it): {@code java -cp ... org.pairpulse.ops.tools.bench.IngestBench}. */
  public static void main(String[] args) {
    System.exit(new picocli.CommandLine(new IngestBench()).execute(args));
  }
}
