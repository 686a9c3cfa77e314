package org.pairpulse.ops.bench;

import java.io.PrintWriter;
import java.lang.management.ManagementFactory;
import java.lang.management.ThreadMXBean;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.concurrent.Callable;
import org.pairpulse.ingest.event.Basket;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.sketch.time.EventClock;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/**
 * {@code pairpulse bench json}: the whole decode path (record bytes and headers to a checked event or a dead-letter
 * reason, {@link EventDecoder#decode}) with each of ingest's JSON readers, on the same records, side by side in one
 * JVM. The records are {@link JsonBenchRecords}' mix (typical 90-byte baskets, line items, large baskets,
 * CloudEvents, invalid records).
 *
 * <ol>
 *   <li>both decoders decode every record once; they must agree on each (the same event, or the same reason);</li>
 *   <li>warm-up rounds, then measured rounds. A round goes through the records in slices ({@code --slice-records});
 *       each slice is decoded by one decoder and right after by the other, the first one alternating, so that the
 *       load of a shared machine falls on both alike;</li>
 *   <li>each decoder's rate is the median of its slices' rates (wall time, so allocation and GC count); the ratio is
 *       the median of the slices' pair ratios. The rates by this thread's CPU time are printed beside them.</li>
 * </ol>
 * Last line: {@code RESULT json hand_written_records_per_s=.. jackson_records_per_s=.. ratio=..} with
 * {@code ratio} = hand-written over Jackson (issue 14 keeps the hand-written reader only at a ratio of 1.5 or more).
 * Run: {@code ops/pairpulse bench json}; under a minute here.
 */
@Command(name = "json", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Decodes the same seeded mix of records (baskets, line items, large baskets, CloudEvents, invalid records)"
            + " with each of ingest's JSON readers, hand-written and Jackson streaming, whole decode path, side by side."
            + " Prints progress, then one line:",
        "RESULT json hand_written_records_per_s=<n> jackson_records_per_s=<n> ratio=<hand-written/jackson>"},
    exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:benchmark ran; RESULT printed", "1:the benchmark failed", "2:invalid options"})
public final class JsonBenchCommand implements Callable<Integer> {
  private static final ThreadMXBean THREADS = ManagementFactory.getThreadMXBean();
  private static final int KIND_ROUNDS = 5;

  @Spec
  CommandSpec spec;

  @Option(names = "--records", paramLabel = "N", description = "Records in the mix (default: ${DEFAULT-VALUE}).")
  int records = 500_000;

  @Option(names = "--warmup-rounds", paramLabel = "N", description = "Warm-up rounds per decoder (default: ${DEFAULT-VALUE}).")
  int warmupRounds = 5;

  @Option(names = "--rounds", paramLabel = "N", description = "Measured rounds per decoder (default: ${DEFAULT-VALUE}).")
  int rounds = 12;

  @Option(names = "--slice-records", paramLabel = "N",
      description = "Records per slice: each slice is decoded by one decoder right after the other (default: ${DEFAULT-VALUE}).")
  int sliceRecords = 20_000;

  @Option(names = "--catalog-items", paramLabel = "N", description = "Distinct item ids (default: ${DEFAULT-VALUE}).")
  int catalogItems = 10_000;

  @Option(names = "--seed", paramLabel = "N", description = "Seed of the record mix (default: ${DEFAULT-VALUE}).")
  long seed = 20_261_203L;

  @Override
  public Integer call() {
    if (records < 1 || warmupRounds < 0 || rounds < 1 || sliceRecords < 1 || catalogItems < 2) {
      throw new ParameterException(spec.commandLine(),
          "--records, --rounds, --slice-records >= 1, --warmup-rounds >= 0, --catalog-items >= 2");
    }
    PrintWriter out = spec.commandLine().getOut();
    long started = System.nanoTime();
    EventClock clock = EventClock.system();
    List<JsonBenchRecords.Record> mix = new JsonBenchRecords(catalogItems, clock.millis(), seed).generate(records);
    describe(mix, out);
    EventDecoder[] decoders = {
        new EventDecoder(EventLimits.defaults(clock), EventDecoder.JsonReader.HAND_WRITTEN),
        new EventDecoder(EventLimits.defaults(clock), EventDecoder.JsonReader.JACKSON)};
    agree(mix, decoders[0], decoders[1], out);

    int slices = (mix.size() + sliceRecords - 1) / sliceRecords;
    // per measured slice and decoder: records per second of wall time and of this thread's CPU time
    double[][] wallRates = new double[2][rounds * slices];
    double[][] cpuRates = new double[2][rounds * slices];
    double[] pairRatios = new double[rounds * slices];
    long[] checksums = new long[2];
    for (int round = -warmupRounds; round < rounds; round++) {
      long[] roundNanos = new long[2];
      Arrays.fill(checksums, 0);
      for (int slice = 0; slice < slices; slice++) {
        int from = slice * sliceRecords;
        int to = Math.min(mix.size(), from + sliceRecords);
        for (int k = 0; k < 2; k++) {
          int d = (Math.floorMod(round + slice, 2) + k) % 2;
          long cpu = THREADS.getCurrentThreadCpuTime();
          long begin = System.nanoTime();
          checksums[d] += pass(mix, from, to, decoders[d]);
          long wallNanos = System.nanoTime() - begin;
          long cpuNanos = THREADS.getCurrentThreadCpuTime() - cpu;
          roundNanos[d] += wallNanos;
          if (round >= 0) {
            wallRates[d][round * slices + slice] = (to - from) / (wallNanos / 1e9);
            cpuRates[d][round * slices + slice] = (to - from) / (Math.max(1, cpuNanos) / 1e9);
          }
        }
        if (round >= 0) {
          pairRatios[round * slices + slice] = wallRates[0][round * slices + slice] / wallRates[1][round * slices + slice];
        }
      }
      double handWritten = mix.size() / (roundNanos[0] / 1e9);
      double jackson = mix.size() / (roundNanos[1] / 1e9);
      out.printf(Locale.ROOT, "  %s %d/%d: hand-written %,.0f records/s, jackson %,.0f records/s, ratio %.3f%n",
          round < 0 ? "warm-up" : "round", round < 0 ? round + warmupRounds + 1 : round + 1, round < 0 ? warmupRounds : rounds,
          handWritten, jackson, handWritten / jackson);
      out.flush();
      if (checksums[0] != checksums[1]) {
        throw new IllegalStateException("the decoders' checksums differ: " + checksums[0] + " vs " + checksums[1]);
      }
    }
    double handWritten = median(wallRates[0]);
    double jackson = median(wallRates[1]);
    double ratio = median(pairRatios);
    out.printf(Locale.ROOT, "medians over %d slices of %,d records: hand-written %,.0f records/s (%.3f us each), jackson"
            + " %,.0f records/s (%.3f us each); ratio of each slice's pair, hand-written/jackson: median %.3f"
            + " (quartiles %.3f..%.3f)%n", rounds * slices, sliceRecords, handWritten, 1e6 / handWritten, jackson,
        1e6 / jackson, ratio, quantile(pairRatios, 0.25), quantile(pairRatios, 0.75));
    out.printf(Locale.ROOT, "by this thread's CPU time (GC threads excluded): hand-written %,.0f records/s, jackson %,.0f"
        + " records/s, ratio %.3f%n", median(cpuRates[0]), median(cpuRates[1]), median(cpuRates[0]) / median(cpuRates[1]));
    byKind(mix, decoders, out);
    out.printf(Locale.ROOT, "hand-written/jackson %.3f: %s%n", ratio, ratio >= 1.5
        ? "the hand-written reader is at least 1.5x faster" : "the hand-written reader is less than 1.5x faster");
    out.printf(Locale.ROOT, "bench json: total %.1f s%n", (System.nanoTime() - started) / 1e9);
    out.printf(Locale.ROOT, "RESULT json hand_written_records_per_s=%d jackson_records_per_s=%d ratio=%.3f%n",
        Math.round(handWritten), Math.round(jackson), ratio);
    out.flush();
    return 0;
  }

  private static void describe(List<JsonBenchRecords.Record> mix, PrintWriter out) {
    Map<JsonBenchRecords.Kind, long[]> kinds = new EnumMap<>(JsonBenchRecords.Kind.class);
    long bytes = 0;
    for (JsonBenchRecords.Record record : mix) {
      long[] countAndBytes = kinds.computeIfAbsent(record.kind(), k -> new long[2]);
      countAndBytes[0]++;
      countAndBytes[1] += record.value().length;
      bytes += record.value().length;
    }
    StringBuilder line = new StringBuilder(String.format(Locale.ROOT, "bench json: %,d records, mean %.0f bytes;", mix.size(),
        (double) bytes / mix.size()));
    kinds.forEach((kind, c) -> line.append(String.format(Locale.ROOT, " %s %.1f%% (mean %.0f bytes)",
        kind.name().toLowerCase(Locale.ROOT), 100.0 * c[0] / mix.size(), (double) c[1] / c[0])));
    out.println(line);
    out.flush();
  }

  /** Both decoders on every record: the same event or the same reason, else the benchmark fails. */
  private static void agree(List<JsonBenchRecords.Record> mix, EventDecoder a, EventDecoder b, PrintWriter out) {
    Map<DeadLetterReason, Integer> reasons = new EnumMap<>(DeadLetterReason.class);
    int decoded = 0;
    for (JsonBenchRecords.Record record : mix) {
      Object first = outcome(a, record);
      Object second = outcome(b, record);
      if (!Objects.equals(first, second)) {
        throw new IllegalStateException("the decoders disagree on " + new String(record.value(),
            java.nio.charset.StandardCharsets.UTF_8) + ": " + first + " vs " + second);
      }
      if (first instanceof DeadLetterReason reason) {
        reasons.merge(reason, 1, Integer::sum);
      } else {
        decoded++;
      }
    }
    out.printf(Locale.ROOT, "bench json: both decoders agree on every record: %,d events, dead letters %s%n", decoded, reasons);
    out.flush();
  }

  /** Each kind of record on its own, {@link #KIND_ROUNDS} alternating rounds: the medians by this thread's CPU time. */
  private static void byKind(List<JsonBenchRecords.Record> mix, EventDecoder[] decoders, PrintWriter out) {
    Map<JsonBenchRecords.Kind, List<JsonBenchRecords.Record>> kinds = new EnumMap<>(JsonBenchRecords.Kind.class);
    for (JsonBenchRecords.Record record : mix) {
      kinds.computeIfAbsent(record.kind(), k -> new ArrayList<>()).add(record);
    }
    kinds.forEach((kind, records) -> {
      double[][] nanosEach = new double[2][KIND_ROUNDS];
      for (int round = 0; round < KIND_ROUNDS; round++) {
        for (int k = 0; k < 2; k++) {
          int d = (round + k) % 2;
          long cpu = THREADS.getCurrentThreadCpuTime();
          pass(records, 0, records.size(), decoders[d]);
          nanosEach[d][round] = (double) (THREADS.getCurrentThreadCpuTime() - cpu) / records.size();
        }
      }
      double handWritten = median(nanosEach[0]);
      double jackson = median(nanosEach[1]);
      out.printf(Locale.ROOT, "  by kind, CPU time: %-12s hand-written %.3f us, jackson %.3f us a record, ratio %.3f%n",
          kind.name().toLowerCase(Locale.ROOT), handWritten / 1e3, jackson / 1e3, jackson / handWritten);
      out.flush();
    });
  }

  private static Object outcome(EventDecoder decoder, JsonBenchRecords.Record record) {
    try {
      return decoder.decode(record.value(), record.headers());
    } catch (InvalidEventException e) {
      return e.reason();
    }
  }

  /** Records [from, to) of the mix; the checksum (items of the baskets, reasons of the dead letters) keeps the work alive. */
  private static long pass(List<JsonBenchRecords.Record> mix, int from, int to, EventDecoder decoder) {
    long checksum = 0;
    for (int i = from; i < to; i++) {
      JsonBenchRecords.Record record = mix.get(i);
      try {
        BasketEvent event = decoder.decode(record.value(), record.headers());
        checksum += event instanceof Basket basket ? basket.items().size() : 1;
      } catch (InvalidEventException e) {
        checksum += 1000 + e.reason().ordinal();
      }
    }
    return checksum;
  }

  private static double median(double[] values) {
    return quantile(values, 0.5);
  }

  /** The {@code q} quantile, linear between order statistics. */
  private static double quantile(double[] values, double q) {
    double[] sorted = values.clone();
    Arrays.sort(sorted);
    double at = q * (sorted.length - 1);
    int low = (int) Math.floor(at);
    int high = Math.min(sorted.length - 1, low + 1);
    return sorted[low] + (at - low) * (sorted[high] - sorted[low]);
  }
}
