package org.pairpulse.sketch.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.SizeClasses;
import org.pairpulse.sketch.table.PairStats;

/** Snapshot round trip, merge of disjoint streams, corruption, version mismatch, a stored fixture. */
class SnapshotTest {
  private static final long START = 1_700_000_000_000L;
  private static final long HOUR = 3_600_000L;

  private static PairEngine streamed(EngineConfig config, long seed, int baskets) {
    PairEngine engine = new PairEngine(config);
    BasketStream stream = BasketStream.pairedHalves(seed, 500, 1.0, 6, 10);
    for (int i = 0; i < baskets; i++) {
      engine.addBasket(START + i * 60_000L, stream.nextBasket());
    }
    return engine;
  }

  @Test
  void roundTripRestoresEveryAnswer() {
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(300).trackedItemCapacity(100).build();
    PairEngine engine = streamed(config, 1, 5_000);
    byte[] snapshot = Snapshots.write(engine);
    PairEngine restored = Snapshots.read(snapshot);
    assertArrayEquals(snapshot, Snapshots.write(restored), "write(read(s)) == s");
    assertEquals(engine.stats(), restored.stats());
    assertEquals(config, Snapshots.configOf(snapshot));
    for (HorizonSpec h : config.horizons()) {
      assertEquals(engine.basketCount(h.name()), restored.basketCount(h.name()));
      for (int i = 0; i < 50; i++) {
        assertEquals(engine.itemCount("item-" + i, h.name()), restored.itemCount("item-" + i, h.name()));
        assertEquals(engine.pairCount("item-" + i, "item-" + (i + 250), h.name()),
            restored.pairCount("item-" + i, "item-" + (i + 250), h.name()));
      }
    }
    // and both go on identically
    engine.addBasket(START + 6_000 * 60_000L, "x", "y", "item-1");
    restored.addBasket(START + 6_000 * 60_000L, "x", "y", "item-1");
    assertArrayEquals(Snapshots.write(engine), Snapshots.write(restored));
  }

  @Test
  void corruptTruncatedOrForeignSnapshotsFailClearly() {
    byte[] good = Snapshots.write(streamed(EngineConfig.builder().trackedPairCapacity(64).build(), 2, 500));

    byte[] flipped = good.clone();
    flipped[flipped.length / 2] ^= 0x10;
    assertMessage(flipped, "corrupt");

    assertMessage(Arrays.copyOf(good, good.length - 7), "truncated");
    assertMessage(Arrays.copyOf(good, 10), "truncated");
    assertMessage(new byte[0], "truncated");

    byte[] newer = good.clone();
    newer[Snapshots.OFFSET_VERSION] = Snapshots.FORMAT_VERSION + 1;
    assertMessage(newer, "version " + (Snapshots.FORMAT_VERSION + 1) + " is not supported");

    byte[] foreign = good.clone();
    foreign[0] = 'X';
    assertMessage(foreign, "not a pairpulse snapshot");
  }

  private static void assertMessage(byte[] snapshot, String fragment) {
    SnapshotFormatException e = assertThrows(SnapshotFormatException.class, () -> Snapshots.read(snapshot));
    assertTrue(e.getMessage().contains(fragment), "message '" + e.getMessage() + "' should say '" + fragment + "'");
  }

  /** The configuration of the stored fixture: small, so the file stays a few kilobytes. */
  static EngineConfig fixtureConfig() {
    return EngineConfig.builder()
        .horizons(List.of(HorizonSpec.decay("recent", Duration.ofHours(1)), HorizonSpec.window("day", Duration.ofHours(2), 2)))
        .trackingHorizon("recent").itemError(0.1, 0.2).pairError(0.1, 0.2).decayPairEpsilon(0.1)
        .trackedPairCapacity(8).trackedItemCapacity(8).sizeClasses(SizeClasses.of(1, 2, 3, 4, 6)).build();
  }

  static PairEngine fixtureEngine() {
    PairEngine engine = new PairEngine(fixtureConfig());
    String[][] baskets = {{"tea", "scone"}, {"tea", "scone", "jam"}, {"coffee", "scone"}, {"tea", "jam"}, {"coffee"},
        {"tea", "scone", "cream"}, {"juice", "toast"}, {"tea", "toast"}};
    for (int i = 0; i < baskets.length; i++) {
      engine.addBasket(START + i * 20 * 60_000L, baskets[i]);
    }
    return engine;
  }

  /**
   * Format compatibility: the version-4 snapshot stored in the repository must still read, with the same answers and
   * the same bytes; the version-3 one (pairs ranked by count) must still read, its ranks the tracking counts; the version-2 one (before the pair-cap steps per size class) must still read, with the same counts
   * and Q_c = K_c (no basket of the fixture is above the pair cap, so that is also the truth); the version-1 one (before basket-size classes) must still read, with the same counts, under the
   * default size classes, its baskets unclassed (so its horizons publish textbook measures).
   */
  @Test
  void storedFixturesStillRead() throws IOException {
    byte[] stored = fixture("fixture-v4.ppsn");
    PairEngine fromFile = Snapshots.read(stored);
    PairEngine fresh = fixtureEngine();
    assertEquals(fresh.basketCount("day"), fromFile.basketCount("day"));
    assertEquals(fresh.pairCount("tea", "scone", "day"), fromFile.pairCount("tea", "scone", "day"));
    assertEquals(fresh.pairCount("tea", "scone", "recent"), fromFile.pairCount("tea", "scone", "recent"));
    assertArrayEquals(stored, Snapshots.write(fresh), "format v4 changed: bump FORMAT_VERSION and keep a reader for v4");

    // format 3 ranked pairs by count: it reads under the fractional ranking with the counts as ranks (upper bounds)
    PairEngine fromVersionThree = Snapshots.read(fixture("fixture-v3.ppsn"));
    assertEquals(fixtureConfig(), fromVersionThree.config(), "format 3 reads under the default ranking");
    assertEquals(fresh.pairCount("tea", "scone", "day"), fromVersionThree.pairCount("tea", "scone", "day"));
    assertEquals(fresh.pairCount("tea", "scone", "recent"), fromVersionThree.pairCount("tea", "scone", "recent"));
    TrackedTable restored = fromVersionThree.pairs;
    boolean someRankAbove = false;
    for (int s = 0; s < restored.size(); s++) {
      int t = fresh.pairs.find(restored.keys[s]);
      assertTrue(t >= 0, "the same pairs are tracked");
      assertEquals(restored.decays[restored.decayIndex(s, restored.trackingDecay)], restored.rank(s),
          "a format-3 rank is the tracking count");
      assertTrue(restored.rank(s) >= fresh.pairs.rank(t) - 1e-12, "a count bounds the fractional rank from above");
      someRankAbove |= restored.rank(s) > fresh.pairs.rank(t) + 1e-12;
    }
    assertTrue(someRankAbove, "the fixture's three-item baskets rank their pairs at 1/2: counts are above");
    assertEquals(fromVersionThree.horizons[fromVersionThree.trackingHorizon].pairSketch[0].totalWeight(),
        fromVersionThree.pairRankSketch.totalWeight(), "the rank sketch starts as the tracking decay's pair sketch");

    PairEngine fromVersionTwo = Snapshots.read(fixture("fixture-v2.ppsn"));
    assertEquals(fixtureConfig(), fromVersionTwo.config());
    assertEquals(fresh.pairCount("tea", "scone", "day"), fromVersionTwo.pairCount("tea", "scone", "day"));
    for (HorizonState state : fromVersionTwo.horizons) {
      assertArrayEquals(state.classPairSlots, state.classWeightedSlots, "format 2 reads with Q_c = K_c");
    }
    assertArrayEquals(Snapshots.write(Snapshots.read(fixture("fixture-v3.ppsn"))), Snapshots.write(fromVersionTwo),
        "a version-2 state writes as a version-3 one read today");

    PairEngine fromVersionOne = Snapshots.read(fixture("fixture-v1.ppsn"));
    assertEquals(fixtureConfig().toBuilder().sizeClasses(SizeClasses.defaults()).build(), fromVersionOne.config(),
        "format 1 reads under the default classes");
    assertEquals(fresh.basketCount("day"), fromVersionOne.basketCount("day"));
    assertEquals(fresh.pairCount("tea", "scone", "day"), fromVersionOne.pairCount("tea", "scone", "day"));
    assertEquals(fresh.itemCount("tea", "recent"), fromVersionOne.itemCount("tea", "recent"));
    PairStats textbook = fromVersionOne.refresh(PairTables.Options.of(1, 0)).pair("tea", "scone", "day").orElseThrow();
    assertFalse(textbook.counts().isStratified(), "restored baskets have no class: textbook measures");
    assertTrue(fresh.refresh(PairTables.Options.of(1, 0)).pair("tea", "scone", "day").orElseThrow().counts().isStratified());
  }

  private static byte[] fixture(String name) throws IOException {
    try (InputStream in = SnapshotTest.class.getResourceAsStream("/snapshots/" + name)) {
      assertTrue(in != null, "fixture missing; regenerate with -Dpairpulse.writeFixture=<dir>");
      return in.readAllBytes();
    }
  }

  /** Not a test: writes the current version's fixture when asked (mvn test -Dtest=SnapshotTest -Dpairpulse.writeFixture=DIR). */
  @Test
  void writeFixtureWhenAsked() throws IOException {
    String dir = System.getProperty("pairpulse.writeFixture");
    if (dir != null) {
      Files.write(Path.of(dir, "fixture-v" + Snapshots.FORMAT_VERSION + ".ppsn"), Snapshots.write(fixtureEngine()));
    }
    assertTrue(Snapshots.write(fixtureEngine()).length < 16_384, "fixture stays small");
  }

  @Test
  void mergeOfDisjointStreamsEqualsTheUnion() {
    EngineConfig config = EngineConfig.builder().trackedPairCapacity(200).trackedItemCapacity(100)
        .pairError(0.01, 0.05).build();
    PairEngine a = new PairEngine(config);
    PairEngine b = new PairEngine(config);
    PairEngine union = new PairEngine(config);
    ExactOracle oracle = new ExactOracle();
    BasketStream stream = BasketStream.pairedHalves(9, 800, 1.0, 6, 20);
    for (int i = 0; i < 30_000; i++) {
      long t = START + i * 90_000L; // ~31 days
      String[] items = stream.nextBasket();
      // b stops after day 12: its windows and landmark lag behind a's, so the merge must align them
      boolean toA = i % 2 == 0 || t > START + 12 * 24 * HOUR;
      (toA ? a : b).addBasket(t, items);
      union.addBasket(t, items);
      oracle.add(t, items);
    }
    PairEngine merged = a.copy();
    merged.merge(b);

    for (int h = 0; h < config.horizons().size(); h++) {
      HorizonState m = merged.horizons[h];
      HorizonState u = union.horizons[h];
      assertEquals(u.newestPane, m.newestPane);
      assertEquals(u.landmarkMillis, m.landmarkMillis);
      for (int p = 0; p < m.paneCount; p++) {
        if (m.isWindow()) {
          assertTrue(m.itemSketch[p].sameCountersAs(u.itemSketch[p]), "item sketch pane " + p + " of " + m.spec.name());
          assertTrue(m.pairSketch[p].sameCountersAs(u.pairSketch[p]), "pair sketch pane " + p + " of " + m.spec.name());
          assertEquals(u.basketWeight[p], m.basketWeight[p]);
        } else { // decayed sums in another order: equal up to rounding
          assertEquals(u.basketWeight[p], m.basketWeight[p], 1e-9 * u.basketWeight[p]);
          assertEquals(u.pairSketch[p].totalWeight(), m.pairSketch[p].totalWeight(), 1e-9 * u.pairSketch[p].totalWeight());
        }
      }
    }
    assertEquals(union.stats().baskets(), merged.stats().baskets());
    assertEquals(union.stats().pairUpdates(), merged.stats().pairUpdates());

    // tracked table: the mergeable-summary guarantee on the rank weights and upper bounds on the union's exact counts
    HorizonSpec tracking = config.trackingSpec();
    Map<String, Double> weights = oracle.pairRanks(tracking); // the default ranking's weights (fractional)
    double total = weights.values().stream().mapToDouble(Double::doubleValue).sum();
    int heavy = 0;
    for (Map.Entry<String, Double> e : weights.entrySet()) {
      String[] ab = ExactOracle.split(e.getKey());
      if (e.getValue() > total / config.trackedPairCapacity()) {
        heavy++;
        assertTrue(merged.isTracked(ab[0], ab[1]), "heavy pair " + e.getKey() + " lost in the merge");
      }
    }
    assertTrue(heavy > 3, "heavy pairs exist: " + heavy);
    for (HorizonSpec h : config.horizons()) {
      for (Map.Entry<String, Double> e : oracle.pairCounts(h).entrySet()) {
        String[] ab = ExactOracle.split(e.getKey());
        Estimate got = merged.pairCount(ab[0], ab[1], h.name());
        assertTrue(got.upper() >= e.getValue() * (1 - 1e-9), "merged undercount of " + e.getKey() + " in " + h.name());
      }
    }
    assertTrue(merged.pairs.heapValid());
  }

  @Test
  void mergeRefusesOtherConfigurations() {
    PairEngine a = new PairEngine(EngineConfig.defaults());
    PairEngine b = new PairEngine(EngineConfig.builder().seed(1).build());
    assertThrows(IllegalArgumentException.class, () -> a.merge(b));
  }
}
