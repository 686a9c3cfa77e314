package org.pairpulse.ops.tools.group;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.PrintWriter;
import java.net.URI;
import java.net.http.HttpClient;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.Callable;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.pairpulse.ingest.broker.EmbeddedKafkaBroker;
import org.pairpulse.ingest.kafka.GroupCoverage;
import org.pairpulse.ops.product.pipeline.Pipeline;
import org.pairpulse.ops.product.run.RunConfig;
import org.pairpulse.ops.tools.bench.BenchMixin;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * {@code pairpulse bench group}: three instances of {@code run} in one consumer group over six partitions of an
 * in-process broker, against a one-instance run of the same input in a group of its own. The basket stream
 * ({@link GroupWorkload}: an emerging pair in its last 12 hours) is sent in steps; after each step the bench waits
 * until every basket is counted by its owner, then until each instance serves it (the view lag: from counted on one
 * instance to served by another, through the state topic). Midway the alert leader is stopped and started again, so
 * that the group's alerts move to another instance and back. At the end it prints one line:
 * <pre>
 * RESULT group instances=3 answers_equal=&lt;0|1&gt; alerts_exactly_once=&lt;0|1&gt; view_lag_ms_p99=&lt;n&gt;
 *     bytes_per_publication=&lt;n&gt; merge_ms_p99=&lt;x&gt;
 * </pre>
 * {@code answers_equal}: every instance's top pairs, rules and suggestions ({@link GroupAnswers#QUERIES}) equal the one
 * instance's (numbers within 1e-9 relative). {@code alerts_exactly_once}: the group's alerts topic, read committed,
 * holds no id twice and the one instance's timeline of (segment, type, pair), which is not empty.
 * {@code bytes_per_publication}: the mean encoded checkpoint an instance reads from the state topic (one partition's
 * publication). {@code merge_ms_p99}: the 99th percentile of a group-view refresh (merge of all six partitions and the
 * pair tables), over every instance. Run: {@code ops/pairpulse bench group}, about 2 minutes here.
 */
@Command(name = "group", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {"Three instances in one consumer group over six partitions against one instance on the same input:"
        + " equal answers, each alert once, view lag, publication bytes and merge time. Prints progress, then one line:",
        "RESULT group instances=3 answers_equal=<0|1> alerts_exactly_once=<0|1> view_lag_ms_p99=<n>"
            + " bytes_per_publication=<n> merge_ms_p99=<x>"})
public final class GroupBenchCommand implements Callable<Integer> {
  private static final String TOPIC = "bench-group.baskets";
  private static final int PARTITIONS = 6;

  @Mixin
  BenchMixin bench;

  @Option(names = "--baskets", paramLabel = "N", description = "Baskets in the stream (default: ${DEFAULT-VALUE}).")
  int baskets = 30_000;

  @Option(names = "--steps", paramLabel = "N", description = "Steps the stream is sent in (default: ${DEFAULT-VALUE}).")
  int steps = 20;

  @Option(names = "--publish-ms", paramLabel = "MS",
      description = "Checkpoint interval, the group view's publication interval (default: ${DEFAULT-VALUE}).")
  long publishMillis = 1000;

  @Option(names = "--refresh-ms", paramLabel = "MS", description = "Refresh interval (default: ${DEFAULT-VALUE}).")
  long refreshMillis = 200;

  @Override
  public Integer call() throws Exception {
    PrintWriter out = bench.out();
    if (baskets < steps || steps < 4 || publishMillis < 100 || refreshMillis < 10) {
      throw bench.usage("need --baskets >= --steps >= 4, --publish-ms >= 100, --refresh-ms >= 10");
    }
    Path dir = Files.createTempDirectory("pairpulse-bench-group");
    GroupWorkload w = new GroupWorkload(23, baskets, 120, 4, 12, System.currentTimeMillis() - 3_600_000L);
    out.printf(Locale.ROOT, "bench group: %,d baskets in %d steps, %d partitions, publication every %d ms, refresh"
        + " every %d ms%n", baskets, steps, PARTITIONS, publishMillis, refreshMillis);
    out.flush();
    try (EmbeddedKafkaBroker broker = EmbeddedKafkaBroker.builder().property("group.min.session.timeout.ms", "1000")
        .build().start();
        KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(Map.of(
            ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers(), ProducerConfig.LINGER_MS_CONFIG, 5),
            new ByteArraySerializer(), new ByteArraySerializer())) {
      broker.createTopic(TOPIC, PARTITIONS);
      String bootstrap = broker.bootstrapServers();
      List<Pipeline> group = new ArrayList<>();
      List<Double> lags = new ArrayList<>();
      List<Double> merges = new ArrayList<>();
      long bytes = 0;
      long publications = 0;
      try (Pipeline reference = start(dir, bootstrap, "bench-ref", "ref")) {
        for (String id : List.of("a", "b", "c")) {
          group.add(start(dir, bootstrap, "bench-grp", id));
        }
        awaitSpread(group);
        out.println("three instances own two partitions each; sending the stream");
        int restartAt = steps / 2;
        for (int step = 0; step < steps; step++) {
          int from = (int) ((long) w.size() * step / steps);
          int to = (int) ((long) w.size() * (step + 1) / steps);
          if (step == restartAt) {
            int leader = leaderIndex(group);
            out.printf(Locale.ROOT, "stopping the alert leader (instance %s) and starting it again%n",
                group.get(leader).ingestor().instanceId());
            String id = group.get(leader).ingestor().instanceId();
            collect(group.get(leader), merges);
            group.get(leader).close();
            group.set(leader, start(dir, bootstrap, "bench-grp", id));
            awaitSpread(group);
          }
          w.produce(producer, TOPIC, from, to);
          long counted = awaitCounted(group, broker, to);
          for (Pipeline instance : group) {
            lags.add((double) (awaitServed(instance, to) - counted));
          }
          awaitServed(reference, to);
          out.printf(Locale.ROOT, "step %2d/%d: %,d baskets; view lag %s ms%n", step + 1, steps, to,
              lags.subList(lags.size() - group.size(), lags.size()).stream().map(l -> String.format(Locale.ROOT, "%.0f", l))
                  .toList());
          out.flush();
        }
        HttpClient http = HttpClient.newHttpClient();
        Map<String, JsonNode> expected = GroupAnswers.fetch(http, reference.server().uri());
        boolean equal = true;
        for (Pipeline instance : group) {
          Optional<String> difference = awaitEqual(http, instance.server().uri(), expected);
          difference.ifPresent(d -> out.println("instance " + instance.ingestor().instanceId() + " differs: " + d));
          equal &= difference.isEmpty();
        }
        boolean once = awaitAlerts(bootstrap, out);
        for (Pipeline instance : group) {
          collect(instance, merges);
          Optional<GroupCoverage> coverage = instance.ingestor().coverage();
          if (coverage.isPresent()) {
            bytes += coverage.get().publicationBytes();
            publications += coverage.get().publicationsRead();
          }
        }
        long perPublication = publications == 0 ? 0 : bytes / publications;
        out.printf(Locale.ROOT, "state bytes of one partition's engine in memory: %,d; publications read: %,d%n",
            group.get(0).sketchHealth().stateBytes(), publications);
        out.printf(Locale.ROOT, "RESULT group instances=3 answers_equal=%d alerts_exactly_once=%d view_lag_ms_p99=%.0f"
            + " bytes_per_publication=%d merge_ms_p99=%.1f%n", equal ? 1 : 0, once ? 1 : 0, percentile(lags, 0.99),
            perPublication, percentile(merges, 0.99));
        out.flush();
        return 0;
      } finally {
        group.forEach(Pipeline::close);
      }
    }
  }

  private Pipeline start(Path dir, String bootstrap, String groupId, String instance) throws Exception {
    Path file = dir.resolve(groupId + "-" + instance + ".properties");
    Files.writeString(file, GroupConfigs.properties(bootstrap, TOPIC, groupId, instance, publishMillis, refreshMillis),
        StandardCharsets.UTF_8);
    return Pipeline.start(RunConfig.load(file).pipelineSettings());
  }

  private static void collect(Pipeline instance, List<Double> merges) {
    merges.addAll(instance.ingestor().recentRefreshMillis());
  }

  private static int leaderIndex(List<Pipeline> group) {
    for (int i = 0; i < group.size(); i++) {
      if (group.get(i).server().alertLeader()) {
        return i;
      }
    }
    return 0;
  }

  /** Waits until each instance owns two partitions. */
  private static void awaitSpread(List<Pipeline> group) throws InterruptedException {
    await(120, () -> group.stream().allMatch(p -> p.ingestor().assignment().size() == PARTITIONS / group.size()),
        "each instance to own two partitions");
  }

  /** Waits until the group's owners have read {@code total} records; returns when (wall-clock ms). */
  private static long awaitCounted(List<Pipeline> group, EmbeddedKafkaBroker broker, int total)
      throws InterruptedException {
    await(120, () -> group.stream().mapToLong(p -> p.ingestor().positions().values().stream()
        .mapToLong(Long::longValue).sum()).sum() >= total, "the owners to read " + total + " records");
    return System.currentTimeMillis();
  }

  /** Waits until the instance serves {@code total} baskets in baseline; returns when (wall-clock ms). */
  private static long awaitServed(Pipeline instance, int total) throws InterruptedException {
    await(120, () -> instance.server().view("all").table().horizon("baseline").map(h -> h.baskets()).orElse(0.0)
        >= total, "instance " + instance.ingestor().instanceId() + " to serve " + total + " baskets");
    return System.currentTimeMillis();
  }

  private static Optional<String> awaitEqual(HttpClient http, URI instance, Map<String, JsonNode> expected)
      throws Exception {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
    Optional<String> difference;
    do {
      difference = GroupAnswers.difference(GroupAnswers.fetch(http, instance), expected, 1e-9);
      if (difference.isEmpty()) {
        return difference;
      }
      Thread.sleep(200); // the group view follows within a publication interval
    } while (System.nanoTime() < deadline);
    return difference;
  }

  /** True when the group's alerts equal the one instance's (not empty), each id once; waits up to a minute. */
  private static boolean awaitAlerts(String bootstrap, PrintWriter out) throws InterruptedException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
    AlertTimeline ours;
    AlertTimeline theirs;
    do {
      ours = AlertTimeline.read(bootstrap, "bench-grp.alerts");
      theirs = AlertTimeline.read(bootstrap, "bench-ref.alerts");
      if (!theirs.timeline().isEmpty() && ours.byTrack().equals(theirs.byTrack())) {
        break;
      }
      Thread.sleep(500); // the leader publishes at its next table
    } while (System.nanoTime() < deadline);
    out.printf(Locale.ROOT, "alerts: group %d events (%s), one instance %d%n", ours.ids().size(),
        ours.idsUnique() ? "each id once" : "an id twice", theirs.ids().size());
    if (!ours.byTrack().equals(theirs.byTrack())) {
      out.println("group timeline:        " + ours.timeline());
      out.println("one-instance timeline: " + theirs.timeline());
    }
    return !theirs.timeline().isEmpty() && ours.byTrack().equals(theirs.byTrack()) && ours.idsUnique();
  }

  private static void await(int seconds, java.util.function.BooleanSupplier condition, String what)
      throws InterruptedException {
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(seconds);
    while (!condition.getAsBoolean()) {
      if (System.nanoTime() > deadline) {
        throw new IllegalStateException("timed out waiting for " + what);
      }
      Thread.sleep(5); // fine-grained: the view lag is measured by this loop
    }
  }

  static double percentile(List<Double> values, double q) {
    if (values.isEmpty()) {
      return 0;
    }
    double[] sorted = values.stream().mapToDouble(Double::doubleValue).toArray();
    Arrays.sort(sorted);
    return sorted[(int) Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)];
  }
}
