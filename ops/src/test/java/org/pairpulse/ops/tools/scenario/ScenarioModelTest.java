package org.pairpulse.ops.tools.scenario;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Instant;
import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/** The scenario's model without sampling: config checks, the catalog, exact expectations, ground truth. */
class ScenarioModelTest {
  static final ScenarioConfig CONFIG = ScenarioConfig.defaults();

  @Test
  void defaultsAreTheDocumentedOnes() {
    assertEquals(20260601L, CONFIG.seed());
    assertEquals(Instant.parse("2026-06-01T00:00:00Z"), CONFIG.start());
    assertEquals(8, CONFIG.durationDays());
    assertEquals(20.0, CONFIG.basketsPerMinute());
    assertEquals(0, CONFIG.outOfOrderMillis());
    assertEquals(Instant.parse("2026-06-09T00:00:00Z").toEpochMilli(), CONFIG.endMillis());
    assertEquals(Instant.parse("2026-06-04T19:00:00Z").toEpochMilli(), CONFIG.millisAt(3, 19));
  }

  @Test
  void invalidSettingsAreRejected() {
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withDurationDays(0));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withDurationDays(ScenarioConfig.MAX_DURATION_DAYS + 1));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withBasketsPerMinute(0));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withBasketsPerMinute(Double.NaN));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withBasketsPerMinute(1e9));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withOutOfOrderMillis(-1));
    assertThrows(IllegalArgumentException.class,
        () -> CONFIG.withOutOfOrderMillis(ScenarioConfig.MAX_OUT_OF_ORDER_MILLIS + 1));
    assertThrows(IllegalArgumentException.class, () -> CONFIG.withStart(Instant.parse("2026-06-01T00:00:00.000000001Z")));
    assertThrows(NullPointerException.class, () -> CONFIG.withStart(null));
    assertThrows(ArithmeticException.class, () -> CONFIG.withStart(Instant.ofEpochMilli(Long.MAX_VALUE - 1000)));
  }

  @Test
  void catalogHasAboutTwoThousandDistinctSlugs() {
    List<String> items = KestrelCatalog.INSTANCE.items();
    assertTrue(items.size() >= 1900 && items.size() <= 2100, "catalog size " + items.size());
    assertEquals(items.size(), new HashSet<>(items).size());
    assertEquals(new HashSet<>(items), new HashSet<>(KestrelCatalog.INSTANCE.popularityOrder()));
    Pattern slug = Pattern.compile("[a-z0-9]+(-[a-z0-9]+)*");
    for (String item : items) {
      assertTrue(slug.matcher(item).matches(), item);
    }
    assertTrue(items.containsAll(List.of("pack-esports", "boost-lowlatency-5gb", "roam-zone-b-day", "protect-travel",
        "handset-orvane-x2", "case-orvane-x2", "guard-orvane-x2", "charger-usb-c-65w", "topup-prepaid-10",
        "handset-kestrel-two", "case-kestrel-two-launch",
        "plan-postpaid-family", "pack-kids", "pack-sports", "pack-documentaries", "pack-cooking", "pack-music",
        "cloud-1tb-monthly", "home-camera-indoor", "intl-zone-3-300min-30d")));
  }

  /**
   * Film, series and album titles always carry a catalogue number ({@code <word>-<word>-no-<n>}), so a random pair
   * of plain words is never a title alone; device names are the coined or descriptive ones.
   */
  @Test
  void titlesCarryACatalogueNumber() {
    Pattern title = Pattern.compile("(film|album)-[a-z]+-[a-z]+-no-[0-9]+|series-[a-z]+-[a-z]+-no-[0-9]+-s[0-9]");
    int titles = 0;
    for (String item : KestrelCatalog.INSTANCE.items()) {
      if (item.startsWith("film-") || item.startsWith("series-") || item.startsWith("album-")) {
        assertTrue(title.matcher(item).matches(), item);
        titles++;
      }
    }
    assertEquals(900 + 4 * 55 + 150, titles);
  }

  /** The launch case is a new item: the ground truth lists it with the handset, lift from the model, none before. */
  @Test
  void launchPairIsInTheGroundTruthAndItsJson() {
    ScenarioGroundTruth truth = new ScenarioGenerator(CONFIG).groundTruth();
    PlantedPair launch = truth.find("handset-kestrel-two", "case-kestrel-two-launch").orElseThrow();
    assertEquals(PlantedKind.EMERGING, launch.kind());
    assertEquals(CONFIG.millisAt(3, 15), launch.startMillis());
    assertEquals(CONFIG.endMillis(), launch.endMillis());
    // P(h) = 0.015, P(c | h) = 1/3, P(c | not h) = 0.0005: lift = (0.005) / (0.015 · (0.005 + 0.985 · 0.0005))
    assertEquals(0.005 / (0.015 * (0.005 + 0.985 * 0.0005)), launch.expectedLift(), 1e-9);
    assertTrue(Double.isNaN(launch.expectedLiftOutside()));
    String json = truth.toJson();
    assertTrue(json.contains("\"items\": [\"case-kestrel-two-launch\", \"handset-kestrel-two\"]"), json);
    assertTrue(json.contains("\"start\": \"2026-06-04T15:00:00Z\", \"end\": \"2026-06-09T00:00:00Z\""), json);
  }

  @ParameterizedTest
  @CsvSource({"6, 0.03, 0.03", "5, 0.03, 0.025", "2, 0.1, 0.01", "1.01, 0.2, 0.3", "50, 0.004, 0.005"})
  void jointShareReachesTheTargetLift(double lift, double rateA, double rateB) {
    double joint = ScenarioScript.jointShareFor(lift, rateA, rateB);
    ItemSetDistribution apart = ItemSetDistribution.bernoulli(rateA, "a")
        .and(ItemSetDistribution.bernoulli(rateB, "b"));
    ItemSetDistribution together = ItemSetDistribution.either(joint, ItemSetDistribution.always("a", "b"), apart);
    assertEquals(lift, together.lift("a", "b"), 1e-9 * lift);
    assertEquals(1.0, apart.lift("a", "b"), 1e-12);
  }

  @Test
  void unreachableLiftIsRefused() {
    // equal rates r peak near 1 / (4 r (1 - r)): 8.6 for r = 0.03
    assertThrows(IllegalArgumentException.class, () -> ScenarioScript.jointShareFor(9, 0.03, 0.03));
    assertThrows(IllegalArgumentException.class, () -> ScenarioScript.jointShareFor(1, 0.03, 0.03));
  }

  @Test
  void distributionSamplesItsOwnProbabilities() {
    ItemSetDistribution d = ItemSetDistribution.either(0.3, ItemSetDistribution.always("x", "y"),
        ItemSetDistribution.bernoulli(0.5, "x")).and(ItemSetDistribution.bernoulli(0.2, "z"));
    assertEquals(0.3 + 0.7 * 0.5, d.probabilityOf("x"), 1e-12);
    assertEquals(0.3, d.probabilityOf("x", "y"), 1e-12);
    assertEquals(0.06, d.probabilityOf("y", "z"), 1e-12);
    assertEquals(List.of("x", "y", "z"), d.items());
    SplittableRandom random = new SplittableRandom(7);
    int draws = 200_000;
    int x = 0;
    int xy = 0;
    for (int i = 0; i < draws; i++) {
      List<String> set = List.of(d.sample(random));
      x += set.contains("x") ? 1 : 0;
      xy += set.contains("x") && set.contains("y") ? 1 : 0;
    }
    assertEquals(0.65, (double) x / draws, 5 * Math.sqrt(0.65 * 0.35 / draws));
    assertEquals(0.3, (double) xy / draws, 5 * Math.sqrt(0.3 * 0.7 / draws));
    // an outcome that cannot happen is never drawn, even at the top of the table
    ItemSetDistribution sure = ItemSetDistribution.bernoulli(1.0, "w");
    for (int i = 0; i < 1000; i++) {
      assertEquals(List.of("w"), List.of(sure.sample(random)));
    }
  }

  /**
   * The ground truth is complete: by exact enumeration of every module in every phase, a pair of scripted items
   * the truth lists has its listed lift (inside or outside its interval), and any other pair lies in the
   * unlisted band. Pairs of different modules are independent by construction (lift 1).
   */
  @Test
  void groundTruthListsEveryScriptedPairOutsideTheUnlistedBand() {
    ScenarioScript script = new ScenarioScript(CONFIG);
    ScenarioGroundTruth truth = new ScenarioGroundTruth(CONFIG, script.planted);
    Set<String> seen = new HashSet<>();
    for (ScenarioScript.Module module : script.modules) {
      for (ItemSetDistribution phase : module.phases()) {
        List<String> items = phase.items();
        for (int i = 0; i < items.size(); i++) {
          for (int j = i + 1; j < items.size(); j++) {
            String a = items.get(i);
            String b = items.get(j);
            double lift = phase.lift(a, b);
            Optional<PlantedPair> listed = truth.find(a, b);
            if (listed.isPresent()) {
              PlantedPair pair = listed.get();
              assertTrue(Math.abs(lift - pair.expectedLift()) < 1e-9 * lift
                  || Math.abs(lift - pair.expectedLiftOutside()) < 1e-9 * lift, pair + " has lift " + lift);
              seen.add(pair.items().toString());
            } else {
              assertTrue(lift >= ScenarioGroundTruth.UNLISTED_LIFT_MIN && lift <= ScenarioGroundTruth.UNLISTED_LIFT_MAX,
                  module.name + ": unlisted " + a + " + " + b + " has lift " + lift);
            }
          }
        }
      }
    }
    for (PlantedPair pair : truth.planted()) {
      if (pair.kind() != PlantedKind.NOISE_POPULARITY) {
        assertTrue(seen.contains(pair.items().toString()), "listed but never played: " + pair.items());
      }
    }
    // the planted lifts hold at the planted times
    for (PlantedPair pair : truth.planted()) {
      if (pair.items().size() == 2) {
        ScenarioScript.Module module = script.modules.stream()
            .filter(m -> m.at(pair.startMillis()).items().containsAll(pair.items())).findFirst().orElseThrow();
        assertEquals(pair.expectedLift(), module.at(pair.startMillis()).lift(pair.items().get(0), pair.items().get(1)),
            1e-9 * pair.expectedLift(), pair.toString());
        assertEquals(pair.expectedLift(), module.at(pair.endMillis() - 1).lift(pair.items().get(0),
            pair.items().get(1)), 1e-9 * pair.expectedLift(), pair.toString());
      }
    }
  }

  @Test
  void plantedTimesFollowTheStartAndShortRunsOmitLaterEvents() {
    ScenarioConfig later = CONFIG.withStart(Instant.parse("2030-01-07T06:00:00Z"));
    ScenarioGroundTruth truth = new ScenarioGenerator(later).groundTruth();
    PlantedPair emerging = truth.ofKind(PlantedKind.EMERGING).get(0);
    assertEquals(Instant.parse("2030-01-10T18:00:00Z").toEpochMilli(), emerging.startMillis());
    PlantedPair launch = truth.ofKind(PlantedKind.EMERGING).get(1);
    assertEquals(Instant.parse("2030-01-10T21:00:00Z").toEpochMilli(), launch.startMillis());

    ScenarioGroundTruth shortRun = new ScenarioGenerator(CONFIG.withDurationDays(3)).groundTruth();
    assertTrue(shortRun.ofKind(PlantedKind.EMERGING).isEmpty());
    assertTrue(shortRun.ofKind(PlantedKind.NOISE_POPULARITY).isEmpty());
    PlantedPair fading = shortRun.ofKind(PlantedKind.FADING).get(0);
    assertEquals(CONFIG.millisAt(5, 0), fading.endMillis(), "the plan, not clipped to the run");
    assertFalse(shortRun.ofKind(PlantedKind.BUNDLE).isEmpty());
    assertEquals(CONFIG.withDurationDays(3).endMillis(), shortRun.ofKind(PlantedKind.BUNDLE).get(0).endMillis());
  }

  @Test
  void plantedPairsAreCheckedAndOrdered() {
    PlantedPair pair = new PlantedPair(PlantedKind.REPELLING, List.of("z", "a"), 0, 1, 0.1, Double.NaN, "");
    assertEquals(List.of("a", "z"), pair.items());
    assertTrue(pair.isPair("z", "a") && pair.isPair("a", "z") && !pair.isPair("a", "b"));
    assertThrows(IllegalArgumentException.class,
        () -> new PlantedPair(PlantedKind.BUNDLE, List.of("a", "a"), 0, 1, 1, 1, ""));
    assertThrows(IllegalArgumentException.class,
        () -> new PlantedPair(PlantedKind.NOISE_POPULARITY, List.of("a", "b"), 0, 1, 1, 1, ""));
    assertThrows(IllegalArgumentException.class,
        () -> new PlantedPair(PlantedKind.EMERGING, List.of("a", "b"), 5, 5, 1, 1, ""));
  }

  @Test
  void basketIdsArePaddedSequenceNumbers() {
    assertEquals("kc-000000001", ScenarioGenerator.basketId(1));
    assertEquals("kc-123456789", ScenarioGenerator.basketId(123_456_789));
    assertEquals("kc-1234567890", ScenarioGenerator.basketId(1_234_567_890));
  }
}
