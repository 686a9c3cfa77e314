package org.pairpulse.ops.tools.scenario;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.Iterator;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The planted events, measured by exact counting ({@link BasketTally}) over one default run (8 simulated days,
 * 20 baskets a minute, about 230,000 baskets), against the scenario's promises and its ground truth.
 */
class ScenarioGeneratorTest {
  static final ScenarioConfig CONFIG = ScenarioConfig.defaults();
  static final ScenarioGenerator SCENARIO = new ScenarioGenerator(CONFIG);
  static final ScenarioGroundTruth TRUTH = SCENARIO.groundTruth();
  static final long START = CONFIG.startMillis();
  static final long END = CONFIG.endMillis();

  static BasketTally tally;
  static final List<String> violations = new ArrayList<>();
  static long baskets;
  static long items;
  static final long[] sizes = new long[ScenarioScript.MAX_BASKET_ITEMS + 2];
  static final Set<String> channels = new HashSet<>();
  static final Set<String> regions = new HashSet<>();
  static long digest = 17;
  static final List<String> firstLines = new ArrayList<>();

  /**
   * The default run, pinned: a change to the catalog, the model or the random streams changes the demo data
   * and must update these on purpose (and say so in the change).
   */
  static final long DEFAULT_RUN_BASKETS = 230_443;
  static final long DEFAULT_RUN_DIGEST = 3109620971950466729L;
  static final List<String> DEFAULT_RUN_FIRST_LINES = List.of(
      "{\"id\":\"kc-000000001\",\"time\":1780272002316,\"items\":[\"boost-1gb\",\"film-distant-ember-no-1\"],"
          + "\"attributes\":{\"channel\":\"app\",\"region\":\"north\"}}",
      "{\"id\":\"kc-000000002\",\"time\":1780272011017,\"items\":[\"boost-maps-unlimited-7d\"],"
          + "\"attributes\":{\"channel\":\"web\",\"region\":\"north\"}}",
      "{\"id\":\"kc-000000003\",\"time\":1780272012831,\"items\":[\"pack-sports\"],"
          + "\"attributes\":{\"channel\":\"web\",\"region\":\"north\"}}");

  /** One pass: checks every basket's shape on the way, and keeps the baskets for counting. */
  @BeforeAll
  static void run() {
    Iterator<ScenarioBasket> checked = new Iterator<>() {
      final Iterator<ScenarioBasket> run = SCENARIO.iterator();
      long previousMillis = Long.MIN_VALUE;

      @Override
      public boolean hasNext() {
        return run.hasNext();
      }

      @Override
      public ScenarioBasket next() {
        ScenarioBasket basket = run.next();
        int size = basket.items().size();
        if (size < 1 || size > ScenarioScript.MAX_BASKET_ITEMS) {
          violations.add(basket.id() + " has " + size + " items");
        }
        for (int i = 1; i < size; i++) {
          if (basket.items().get(i - 1).compareTo(basket.items().get(i)) >= 0) {
            violations.add(basket.id() + " items not distinct and sorted: " + basket.items());
          }
        }
        if (basket.eventMillis() < previousMillis) {
          violations.add(basket.id() + " goes back in time");
        }
        if (basket.eventMillis() < START || basket.eventMillis() >= END) {
          violations.add(basket.id() + " outside the run");
        }
        if (!List.of("channel", "region").equals(new ArrayList<>(basket.attributes().keySet()))) {
          violations.add(basket.id() + " attributes " + basket.attributes());
        }
        if (!basket.id().equals(ScenarioGenerator.basketId(baskets + 1))) {
          violations.add(basket.id() + " out of sequence");
        }
        previousMillis = basket.eventMillis();
        channels.add(basket.attributes().get("channel"));
        regions.add(basket.attributes().get("region"));
        if (firstLines.size() < DEFAULT_RUN_FIRST_LINES.size()) {
          firstLines.add(ScenarioFiles.jsonLine(basket));
        }
        digest = digest(digest, basket);
        baskets++;
        items += size;
        sizes[size]++;
        return basket;
      }
    };
    tally = new BasketTally(checked, SCENARIO.catalog());
  }

  static PlantedPair only(PlantedKind kind) {
    List<PlantedPair> pairs = TRUTH.ofKind(kind);
    assertEquals(1, pairs.size(), kind.toString());
    return pairs.get(0);
  }

  @Test
  void everyBasketIsWellFormedAndTimesNeverDecrease() {
    assertEquals(List.of(), violations.subList(0, Math.min(10, violations.size())));
    assertEquals(Set.of("app", "web", "store"), channels);
    assertEquals(Set.of("capital", "north", "south", "coast", "highlands"), regions);
  }

  @Test
  void basketCountFollowsTheRate() {
    double expected = CONFIG.basketsPerMinute() * 60 * 24 * CONFIG.durationDays();
    assertEquals(expected, baskets, 5 * Math.sqrt(expected), "Poisson count, 5 sigma");
  }

  @Test
  void basketSizesSpanOneToEightWithMeanAboutThree() {
    double mean = (double) items / baskets;
    assertTrue(mean >= 2.6 && mean <= 3.4, "mean basket size " + mean);
    for (int size = 1; size <= ScenarioScript.MAX_BASKET_ITEMS; size++) {
      assertTrue(sizes[size] > 0, "no basket of " + size + " items");
    }
  }

  @Test
  void eveningsAreBusierThanNights() {
    for (int day = 0; day < CONFIG.durationDays(); day++) {
      int evening = tally.baskets(CONFIG.millisAt(day, 19), CONFIG.millisAt(day, 22));
      int night = tally.baskets(CONFIG.millisAt(day, 2), CONFIG.millisAt(day, 5));
      assertTrue(evening > 4 * night, "day " + day + ": evening " + evening + ", night " + night);
    }
  }

  @Test
  void popularityIsZipfLike() {
    int[] counts = tally.itemCounts(START, END);
    int[] sorted = java.util.Arrays.stream(counts).sorted().toArray();
    int top = sorted[sorted.length - 1];
    int tenth = sorted[sorted.length - 10];
    int hundredth = sorted[sorted.length - 100];
    assertTrue(top > 4 * tenth && tenth > 4 * hundredth, top + " " + tenth + " " + hundredth);
    assertTrue(top < 0.5 * baskets, "the top item is in " + top + " of " + baskets + " baskets");
  }

  @Test
  void twoEmergingPairsArePlanted() {
    List<PlantedPair> emerging = TRUTH.ofKind(PlantedKind.EMERGING);
    assertEquals(2, emerging.size(), emerging.toString());
    assertEquals(List.of(ScenarioScript.LOW_LATENCY_BOOST, ScenarioScript.ESPORTS_PACK), emerging.get(0).items());
    assertEquals(List.of(ScenarioScript.LAUNCH_CASE, ScenarioScript.LAUNCH_HANDSET), emerging.get(1).items());
  }

  @Test
  void emergingPairHasLiftAboutSixInItsPeriodOnlyAndMatchesTheGroundTruth() {
    PlantedPair emerging = TRUTH.find(ScenarioScript.ESPORTS_PACK, ScenarioScript.LOW_LATENCY_BOOST).orElseThrow();
    assertEquals(PlantedKind.EMERGING, emerging.kind());
    assertEquals(List.of(ScenarioScript.LOW_LATENCY_BOOST, ScenarioScript.ESPORTS_PACK), emerging.items());
    assertEquals(CONFIG.millisAt(3, 12), emerging.startMillis(), "noon on day 3: the game's new season opens");
    assertEquals(CONFIG.millisAt(5, 12), emerging.endMillis());
    assertEquals(6.0, emerging.expectedLift(), 1e-9);
    assertEquals(1.0, emerging.expectedLiftOutside(), 1e-9);
    String a = emerging.items().get(0);
    String b = emerging.items().get(1);

    double inside = tally.lift(a, b, emerging.startMillis(), emerging.endMillis());
    double before = tally.lift(a, b, START, emerging.startMillis());
    double after = tally.lift(a, b, emerging.endMillis(), END);
    assertTrue(inside >= 4 && inside <= 8, "lift inside " + inside);
    assertEquals(emerging.expectedLift(), inside, 0.15 * emerging.expectedLift(), "against the ground truth");
    assertTrue(before >= 0.5 && before <= 1.5, "lift before " + before);
    assertTrue(after >= 0.5 && after <= 1.5, "lift after " + after);
    // the afternoon it starts, it is already there
    double firstHours = tally.lift(a, b, emerging.startMillis(), emerging.startMillis() + 5 * 3_600_000L);
    assertTrue(firstHours > 3, "lift in the first 5 hours " + firstHours);
  }

  /**
   * The second emerging pair starts from nothing: the launch case never sells before its start, then comes with
   * the handset in about a third of the handset's baskets, to the end of the run, as the ground truth says.
   */
  @Test
  void launchCaseStartsFromNothingWithTheNewHandset() {
    String handset = ScenarioScript.LAUNCH_HANDSET;
    String launchCase = ScenarioScript.LAUNCH_CASE;
    PlantedPair launch = TRUTH.find(handset, launchCase).orElseThrow();
    assertEquals(PlantedKind.EMERGING, launch.kind());
    assertEquals(CONFIG.millisAt(3, 15), launch.startMillis(), "the same afternoon as the e-sports pair");
    assertEquals(END, launch.endMillis(), "to the end of the run");
    assertTrue(Double.isNaN(launch.expectedLiftOutside()), "lift undefined before: the case did not sell");

    assertEquals(0, tally.count(START, launch.startMillis(), launchCase), "the case never sold before");
    assertTrue(tally.count(START, launch.startMillis(), handset) >= 1000, "the handset sold all along");
    double confidence = tally.confidence(handset, launchCase, launch.startMillis(), END);
    assertEquals(1.0 / 3, confidence, 0.05, "a third of the handset's baskets");
    double reverse = tally.confidence(launchCase, handset, launch.startMillis(), END);
    assertTrue(reverse > 0.8 && reverse < 0.95, "mostly with the handset, not a bundle: " + reverse);
    double lift = tally.lift(handset, launchCase, launch.startMillis(), END);
    assertEquals(launch.expectedLift(), lift, 0.2 * launch.expectedLift(), "against the ground truth");
  }

  @Test
  void fadingPairIsStrongBeforeDayFiveAndIndependentAfter() {
    PlantedPair fading = only(PlantedKind.FADING);
    assertEquals(List.of(ScenarioScript.TRAVEL_PROTECTION, ScenarioScript.ROAMING_PASS), fading.items());
    assertEquals(START, fading.startMillis());
    assertEquals(CONFIG.millisAt(5, 0), fading.endMillis());
    String a = fading.items().get(0);
    String b = fading.items().get(1);

    double before = tally.lift(a, b, START, fading.endMillis());
    double after = tally.lift(a, b, fading.endMillis(), END);
    assertEquals(fading.expectedLift(), before, 0.2 * fading.expectedLift(), "lift before the fade");
    assertTrue(before >= 3.5, "lift before " + before);
    assertTrue(after >= 0.5 && after <= 1.5, "lift after " + after);
    // day 4 alone is still strong: the fade is a step at day 5, not a slide
    assertTrue(tally.lift(a, b, CONFIG.millisAt(4, 0), CONFIG.millisAt(5, 0)) > 3);
  }

  @Test
  void bundlesHaveConfidenceAtLeast95PercentBothWays() {
    List<PlantedPair> bundles = TRUTH.ofKind(PlantedKind.BUNDLE);
    assertEquals(KestrelCatalog.HANDSET_MODELS.size(), bundles.size());
    for (PlantedPair bundle : bundles) {
      String a = bundle.items().get(0);
      String b = bundle.items().get(1);
      assertTrue(tally.count(START, END, a, b) >= 300, "support of " + bundle.items());
      double ab = tally.confidence(a, b, START, END);
      double ba = tally.confidence(b, a, START, END);
      assertTrue(ab >= 0.95 && ba >= 0.95, bundle.items() + ": " + ab + ", " + ba);
    }
    // the handset's screen guard is an affinity, not a bundle: one way only
    String handset = KestrelCatalog.handset("orvane-x2");
    String guard = KestrelCatalog.screenGuard("orvane-x2");
    assertTrue(tally.confidence(handset, guard, START, END) < 0.6);
    assertTrue(tally.confidence(guard, handset, START, END) > 0.95);
  }

  @Test
  void topUpsRepelTheFamilyPlan() {
    List<PlantedPair> repelling = TRUTH.ofKind(PlantedKind.REPELLING);
    assertEquals(KestrelCatalog.TOPUP_AMOUNTS.size(), repelling.size());
    int n = tally.baskets(START, END);
    long together = 0;
    double independent = 0;
    int tested = 0;
    for (PlantedPair pair : repelling) {
      String a = pair.items().get(0);
      String b = pair.items().get(1);
      double expectedIfIndependent = (double) tally.count(START, END, a) * tally.count(START, END, b) / n;
      together += tally.count(START, END, a, b);
      independent += expectedIfIndependent;
      if (expectedIfIndependent >= 30) {
        double lift = tally.lift(a, b, START, END);
        assertTrue(lift < 0.3, pair.items() + " lift " + lift);
        tested++;
      }
    }
    assertTrue(tested >= 3, "pairs with enough support: " + tested);
    assertTrue(together / independent < 0.2, "pooled lift " + together / independent);
  }

  @Test
  void flashSaleLiftsTheChargersPopularityButNotItsPairs() {
    PlantedPair noise = only(PlantedKind.NOISE_POPULARITY);
    String charger = noise.items().get(0);
    assertEquals(ScenarioScript.FLASH_CHARGER, charger);
    assertEquals(CONFIG.millisAt(4, 0), noise.startMillis());
    assertEquals(CONFIG.millisAt(5, 0), noise.endMillis());

    double shareBefore = (double) tally.count(START, noise.startMillis(), charger)
        / tally.baskets(START, noise.startMillis());
    double shareDuring = (double) tally.count(noise.startMillis(), noise.endMillis(), charger)
        / tally.baskets(noise.startMillis(), noise.endMillis());
    double shareAfter = (double) tally.count(noise.endMillis(), END, charger) / tally.baskets(noise.endMillis(), END);
    assertTrue(shareDuring > 4 * shareBefore && shareDuring > 4 * shareAfter,
        "share before " + shareBefore + ", during " + shareDuring + ", after " + shareAfter);

    int n = tally.baskets(noise.startMillis(), noise.endMillis());
    int[] itemCounts = tally.itemCounts(noise.startMillis(), noise.endMillis());
    int[] pairCounts = tally.partnerCounts(charger, noise.startMillis(), noise.endMillis());
    int chargerCount = itemCounts[tally.id(charger)];
    int tested = 0;
    for (int partner = 0; partner < itemCounts.length; partner++) {
      if (partner == tally.id(charger)) {
        continue;
      }
      double expectedIfIndependent = (double) chargerCount * itemCounts[partner] / n;
      if (expectedIfIndependent >= 50) { // enough support: selected by the margins, not by the pair count
        double lift = pairCounts[partner] / expectedIfIndependent;
        assertTrue(lift >= 0.5 && lift <= 2, charger + " + " + tally.names[partner] + " lift " + lift);
        tested++;
      }
    }
    assertTrue(tested >= 5, "partners with enough support: " + tested);
  }

  @Test
  void affinitiesAreStrongAndSteady() {
    for (PlantedPair affinity : TRUTH.ofKind(PlantedKind.AFFINITY)) {
      String a = affinity.items().get(0);
      String b = affinity.items().get(1);
      double firstHalf = tally.lift(a, b, START, CONFIG.millisAt(4, 0));
      double secondHalf = tally.lift(a, b, CONFIG.millisAt(4, 0), END);
      assertTrue(firstHalf > 3 && secondHalf > 3, affinity.items() + ": " + firstHalf + ", " + secondHalf);
    }
  }

  /**
   * The ground truth's promise about unlisted pairs, measured: among the most popular items, every pair the
   * truth does not list, with enough support, has lift in the unlisted band over the whole run.
   */
  @Test
  void unlistedPopularPairsStayNearIndependence() {
    int n = tally.baskets(START, END);
    int[] counts = tally.itemCounts(START, END);
    List<String> popular = new ArrayList<>();
    for (int id = 0; id < counts.length; id++) {
      if (counts[id] >= 0.01 * n) {
        popular.add(tally.names[id]);
      }
    }
    assertTrue(popular.size() >= 20, "popular items: " + popular.size());
    int tested = 0;
    for (String a : popular) {
      int[] partners = tally.partnerCounts(a, START, END);
      for (String b : popular) {
        if (a.compareTo(b) >= 0 || TRUTH.find(a, b).isPresent()) {
          continue;
        }
        double expectedIfIndependent = (double) counts[tally.id(a)] * counts[tally.id(b)] / n;
        if (expectedIfIndependent >= 200) {
          double lift = partners[tally.id(b)] / expectedIfIndependent;
          assertTrue(lift >= ScenarioGroundTruth.UNLISTED_LIFT_MIN && lift <= ScenarioGroundTruth.UNLISTED_LIFT_MAX,
              a + " + " + b + " lift " + lift);
          tested++;
        }
      }
    }
    assertTrue(tested >= 50, "pairs tested: " + tested);
  }

  @Test
  void sameSeedSameBasketsOtherSeedOthers() {
    ScenarioConfig small = CONFIG.withDurationDays(1).withBasketsPerMinute(5);
    List<ScenarioBasket> first = list(new ScenarioGenerator(small).iterator());
    List<ScenarioBasket> again = list(new ScenarioGenerator(small).iterator());
    ScenarioGenerator generator = new ScenarioGenerator(small);
    assertEquals(first, again);
    assertEquals(first, list(generator.iterator()));
    assertEquals(first, list(generator.iterator()), "every iterator starts over");
    assertEquals(first, generator.stream().toList());
    assertNotEquals(first, list(new ScenarioGenerator(small.withSeed(small.seed() + 1)).iterator()));
  }

  @Test
  void defaultRunIsPinned() {
    assertEquals(DEFAULT_RUN_FIRST_LINES, firstLines);
    assertEquals(DEFAULT_RUN_BASKETS, baskets);
    assertEquals(DEFAULT_RUN_DIGEST, digest, "digest of every basket of the default run");
  }

  @Test
  void jitterMovesEventTimesBackBoundedly() {
    long jitterMillis = 30_000;
    ScenarioConfig jittered = CONFIG.withDurationDays(1).withBasketsPerMinute(5).withOutOfOrderMillis(jitterMillis);
    long maxSeen = Long.MIN_VALUE;
    int outOfOrder = 0;
    int count = 0;
    List<ScenarioBasket> moved = list(new ScenarioGenerator(jittered).iterator());
    for (ScenarioBasket basket : moved) {
      assertTrue(basket.eventMillis() >= jittered.startMillis() && basket.eventMillis() < jittered.endMillis());
      if (basket.eventMillis() < maxSeen) {
        outOfOrder++;
        assertTrue(maxSeen - basket.eventMillis() <= jitterMillis, "late by " + (maxSeen - basket.eventMillis()));
      }
      maxSeen = Math.max(maxSeen, basket.eventMillis());
      count++;
    }
    assertTrue(outOfOrder > count / 10, outOfOrder + " of " + count + " out of order");
    // jitter has its own random stream: on day 0 (no planted phase changes) only the times move
    List<ScenarioBasket> plain = list(new ScenarioGenerator(jittered.withOutOfOrderMillis(0)).iterator());
    assertEquals(plain.size(), count);
    for (int b = 0; b < count; b++) {
      assertEquals(plain.get(b).id(), moved.get(b).id());
      assertEquals(plain.get(b).items(), moved.get(b).items());
      long backMillis = plain.get(b).eventMillis() - moved.get(b).eventMillis();
      assertTrue(backMillis >= 0 && backMillis <= jitterMillis, "moved back by " + backMillis);
    }
  }

  @Test
  void iteratorEndsCleanly() {
    Iterator<ScenarioBasket> run = new ScenarioGenerator(CONFIG.withDurationDays(1).withBasketsPerMinute(0.01))
        .iterator();
    while (run.hasNext()) {
      run.next();
    }
    assertFalse(run.hasNext());
    org.junit.jupiter.api.Assertions.assertThrows(java.util.NoSuchElementException.class, run::next);
  }

  static List<ScenarioBasket> list(Iterator<ScenarioBasket> run) {
    List<ScenarioBasket> baskets = new ArrayList<>();
    run.forEachRemaining(baskets::add);
    return baskets;
  }

  /** Folds one basket into a digest (String, List and Map hash codes are specified, so this is stable). */
  static long digest(long digest, ScenarioBasket basket) {
    digest = 31 * digest + basket.id().hashCode();
    digest = 31 * digest + Long.hashCode(basket.eventMillis());
    digest = 31 * digest + basket.items().hashCode();
    return 31 * digest + basket.attributes().hashCode();
  }
}
