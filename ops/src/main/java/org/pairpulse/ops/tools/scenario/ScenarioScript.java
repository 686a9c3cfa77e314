package org.pairpulse.ops.tools.scenario;

import static org.pairpulse.ops.tools.scenario.ItemSetDistribution.always;
import static org.pairpulse.ops.tools.scenario.ItemSetDistribution.bernoulli;
import static org.pairpulse.ops.tools.scenario.ItemSetDistribution.either;
import static org.pairpulse.ops.tools.scenario.ItemSetDistribution.nothing;

import java.util.ArrayList;
import java.util.Collections;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;

/**
 * The planted part of the scenario: which items are scripted, how each basket gets them, and the ground truth
 * read from the same definitions.
 *
 * <h2>Model</h2>
 * A basket is the union of independent parts:
 * <ol>
 *   <li>one draw from each {@linkplain Module module} below (a small distribution over item sets that may
 *       change at planted times); modules are independent of each other, so any two items of different
 *       modules have expected lift exactly 1;
 *   <li>background items: a size drawn from {@link #BACKGROUND_SIZE_PROBABILITIES}, capped so that the basket
 *       holds at most {@link #MAX_BASKET_ITEMS}, filled with distinct items drawn by Zipf's law
 *       (exponent {@link #ZIPF_EXPONENT}) over the catalog minus the scripted items. Background pairs have
 *       lift close to 1 (basket-size spread and drawing without replacement move it by a few percent).
 * </ol>
 * Scripted items never come from the background, so their marginals and joints are exactly those of their
 * module; {@link ItemSetDistribution} gives them in closed form. More than 8 scripted items in one basket
 * (which needs a dozen rare draws at once) would be cut to the first 8.
 *
 * <h2>Modules</h2>
 * <ul>
 *   <li><b>e-sports</b>: {@code pack-esports} and {@code boost-lowlatency-5gb}, each with probability 0.03,
 *       independent, except in [day 3 12:00, day 5 12:00) (a popular online game opens a new season at noon on
 *       day 3) where with probability q both come together and otherwise as before; q solves lift = 6
 *       ({@link #jointShareFor}).
 *   <li><b>launch</b>: the new handset {@code handset-kestrel-two} with probability 0.015 all run long. From day 3
 *       15:00 its launch case {@code case-kestrel-two-launch}, never sold before, comes with it in a third of its
 *       baskets, and alone in 0.0005 of all baskets: an emerging pair from nothing (lift about 61, confidence 1/3
 *       from the handset, about 0.91 from the case; not a bundle).
 *   <li><b>roaming</b>: {@code roam-zone-b-day} (0.03) and {@code protect-travel} (0.025): lift 5 the same
 *       way until day 5 00:00 (the summer promotion), independent afterwards.
 *   <li><b>handset, one per model</b> (8 models, shares by Zipf's law): a handset purchase (0.04 over all
 *       models) brings its own case with 0.98 and its screen guard with 0.45; independently an
 *       accessory-only purchase (0.001 over all models) brings a case (70%) or a guard (30%).
 *   <li><b>plans</b>: the postpaid family plan (0.025) brings the kids pack with 0.2 (0.04 without the plan)
 *       and cuts each prepaid top-up's probability to 5% of its usual rate (top-ups: 0.07 in all, split
 *       30/30/15/15/10% over 10/20/15/30/50).
 *   <li><b>charger</b>: {@code charger-usb-c-65w} with 0.01, 0.08 on day 4 (the flash sale), alone.
 * </ul>
 *
 * <p>Through the family plan the kids pack leans slightly away from top-ups (expected lift about 0.91); that
 * and every other unlisted pair stay inside [{@link ScenarioGroundTruth#UNLISTED_LIFT_MIN},
 * {@link ScenarioGroundTruth#UNLISTED_LIFT_MAX}], which the tests check.
 */
final class ScenarioScript {
  static final int MAX_BASKET_ITEMS = 8;
  /** Probability of 1..8 background items (index 0 is one item): mean 2.88, plus about 0.35 scripted. */
  static final double[] BACKGROUND_SIZE_PROBABILITIES = {0.26, 0.25, 0.19, 0.12, 0.08, 0.05, 0.03, 0.02};
  static final double ZIPF_EXPONENT = 1.0;

  static final String ESPORTS_PACK = "pack-esports";
  static final String LOW_LATENCY_BOOST = "boost-lowlatency-5gb";
  static final double ESPORTS_RATE = 0.03;
  static final double LOW_LATENCY_RATE = 0.03;
  static final double EMERGING_LIFT = 6.0;
  static final int EMERGING_START_DAY = 3;
  static final int EMERGING_START_HOUR = 12;
  static final int EMERGING_DAYS = 2;

  static final String LAUNCH_HANDSET = KestrelCatalog.handset(KestrelCatalog.LAUNCH_MODEL);
  static final String LAUNCH_CASE = KestrelCatalog.launchCase(KestrelCatalog.LAUNCH_MODEL);
  static final double LAUNCH_HANDSET_RATE = 0.015;
  static final double LAUNCH_CASE_WITH_HANDSET = 1.0 / 3;
  static final double LAUNCH_CASE_ALONE_RATE = 0.0005;
  static final int LAUNCH_START_DAY = 3;
  static final int LAUNCH_START_HOUR = 15;

  static final String ROAMING_PASS = "roam-zone-b-day";
  static final String TRAVEL_PROTECTION = "protect-travel";
  static final double ROAMING_RATE = 0.03;
  static final double TRAVEL_PROTECTION_RATE = 0.025;
  static final double FADING_LIFT = 5.0;
  static final int FADING_END_DAY = 5;

  static final double HANDSET_RATE = 0.04;
  static final double CASE_WITH_HANDSET = 0.98;
  static final double GUARD_WITH_HANDSET = 0.45;
  static final double ACCESSORY_ONLY_RATE = 0.001;
  static final double ACCESSORY_ONLY_CASE_SHARE = 0.7;

  static final String FAMILY_PLAN = "plan-postpaid-family";
  static final String KIDS_PACK = "pack-kids";
  static final double FAMILY_PLAN_RATE = 0.025;
  static final double KIDS_WITH_FAMILY = 0.2;
  static final double KIDS_WITHOUT_FAMILY = 0.04;
  static final double TOPUP_RATE = 0.07;
  /** Shares of {@link KestrelCatalog#TOPUP_AMOUNTS} in {@link #TOPUP_RATE}. */
  static final double[] TOPUP_SHARES = {0.3, 0.3, 0.15, 0.15, 0.1};
  static final double TOPUP_FACTOR_WITH_FAMILY = 0.05;

  static final String FLASH_CHARGER = "charger-usb-c-65w";
  static final double CHARGER_RATE = 0.01;
  static final double FLASH_SALE_RATE = 0.08;
  static final int FLASH_SALE_DAY = 4;

  /**
   * One independent part of every basket: distribution {@code phases[i]} applies from event time
   * {@code fromMillis[i]} (the first from the beginning of time) to the next one's.
   */
  static final class Module {
    final String name;
    private final long[] fromMillis;
    private final ItemSetDistribution[] phases;

    Module(String name, long[] fromMillis, ItemSetDistribution[] phases) {
      assert fromMillis.length == phases.length && fromMillis[0] == Long.MIN_VALUE;
      this.name = name;
      this.fromMillis = fromMillis;
      this.phases = phases;
    }

    static Module steady(String name, ItemSetDistribution distribution) {
      return new Module(name, new long[] {Long.MIN_VALUE}, new ItemSetDistribution[] {distribution});
    }

    /** {@code inside} in {@code [fromMillis, toMillis)}, {@code outside} before and after. */
    static Module during(String name, long fromMillis, long toMillis, ItemSetDistribution inside,
        ItemSetDistribution outside) {
      return new Module(name, new long[] {Long.MIN_VALUE, fromMillis, toMillis},
          new ItemSetDistribution[] {outside, inside, outside});
    }

    ItemSetDistribution at(long eventMillis) {
      int phase = 0;
      while (phase + 1 < fromMillis.length && fromMillis[phase + 1] <= eventMillis) {
        phase++;
      }
      return phases[phase];
    }

    List<ItemSetDistribution> phases() {
      return List.of(phases);
    }
  }

  final List<Module> modules;
  /** Items that only modules add (never the background). */
  final Set<String> scriptedItems;
  final List<PlantedPair> planted;

  ScenarioScript(ScenarioConfig config) {
    long startMillis = config.startMillis();
    long endMillis = config.endMillis();
    List<Module> modules = new ArrayList<>();
    List<PlantedPair> planted = new ArrayList<>();

    // 1. emerging: a popular online game opens a new season
    long emergingFrom = config.millisAt(EMERGING_START_DAY, EMERGING_START_HOUR);
    long emergingTo = emergingFrom + EMERGING_DAYS * ScenarioConfig.DAY_MILLIS;
    ItemSetDistribution esportsApart = bernoulli(ESPORTS_RATE, ESPORTS_PACK)
        .and(bernoulli(LOW_LATENCY_RATE, LOW_LATENCY_BOOST));
    double esportsJoint = jointShareFor(EMERGING_LIFT, ESPORTS_RATE, LOW_LATENCY_RATE);
    ItemSetDistribution esportsTogether = either(esportsJoint, always(ESPORTS_PACK, LOW_LATENCY_BOOST), esportsApart);
    modules.add(Module.during("e-sports", emergingFrom, emergingTo, esportsTogether, esportsApart));
    planted.add(new PlantedPair(PlantedKind.EMERGING, List.of(ESPORTS_PACK, LOW_LATENCY_BOOST), emergingFrom,
        emergingTo, esportsTogether.lift(ESPORTS_PACK, LOW_LATENCY_BOOST),
        esportsApart.lift(ESPORTS_PACK, LOW_LATENCY_BOOST),
        String.format(Locale.ROOT, "a popular online game opens a new season: both items together in %.2f%% of"
            + " baskets on top of independent rates %.2f and %.2f", 100 * esportsJoint, ESPORTS_RATE,
            LOW_LATENCY_RATE)));

    // 1b. emerging from nothing: the new handset's launch case arrives the same afternoon
    long launchFrom = config.millisAt(LAUNCH_START_DAY, LAUNCH_START_HOUR);
    ItemSetDistribution handsetAlone = either(LAUNCH_HANDSET_RATE, always(LAUNCH_HANDSET), nothing());
    ItemSetDistribution withLaunchCase = either(LAUNCH_HANDSET_RATE,
        always(LAUNCH_HANDSET).and(bernoulli(LAUNCH_CASE_WITH_HANDSET, LAUNCH_CASE)),
        bernoulli(LAUNCH_CASE_ALONE_RATE, LAUNCH_CASE));
    modules.add(new Module("launch", new long[] {Long.MIN_VALUE, launchFrom},
        new ItemSetDistribution[] {handsetAlone, withLaunchCase}));
    if (launchFrom < endMillis) {
      planted.add(new PlantedPair(PlantedKind.EMERGING, List.of(LAUNCH_HANDSET, LAUNCH_CASE), launchFrom, endMillis,
          withLaunchCase.lift(LAUNCH_HANDSET, LAUNCH_CASE), Double.NaN,
          String.format(Locale.ROOT, "a new handset's launch case, never sold before, goes on sale: in %.1f%% of the"
              + " handset's baskets (handset in %.2f%% of baskets), alone in %.2f%%; confidence %.3f one way, %.3f the"
              + " other; lift undefined before (the case did not sell)", 100 * LAUNCH_CASE_WITH_HANDSET,
              100 * LAUNCH_HANDSET_RATE, 100 * LAUNCH_CASE_ALONE_RATE,
              withLaunchCase.confidence(LAUNCH_HANDSET, LAUNCH_CASE),
              withLaunchCase.confidence(LAUNCH_CASE, LAUNCH_HANDSET))));
    }

    // 2. fading: the summer roaming promotion ends
    long fadingTo = config.millisAt(FADING_END_DAY, 0);
    ItemSetDistribution roamingApart = bernoulli(ROAMING_RATE, ROAMING_PASS)
        .and(bernoulli(TRAVEL_PROTECTION_RATE, TRAVEL_PROTECTION));
    double roamingJoint = jointShareFor(FADING_LIFT, ROAMING_RATE, TRAVEL_PROTECTION_RATE);
    ItemSetDistribution roamingTogether = either(roamingJoint, always(ROAMING_PASS, TRAVEL_PROTECTION), roamingApart);
    modules.add(new Module("roaming", new long[] {Long.MIN_VALUE, fadingTo},
        new ItemSetDistribution[] {roamingTogether, roamingApart}));
    planted.add(new PlantedPair(PlantedKind.FADING, List.of(ROAMING_PASS, TRAVEL_PROTECTION), startMillis,
        fadingTo, roamingTogether.lift(ROAMING_PASS, TRAVEL_PROTECTION),
        roamingApart.lift(ROAMING_PASS, TRAVEL_PROTECTION),
        String.format(Locale.ROOT, "summer roaming promotion until day %d: both items together in %.2f%% of"
            + " baskets on top of independent rates %.3f and %.3f; independent afterwards", FADING_END_DAY,
            100 * roamingJoint, ROAMING_RATE, TRAVEL_PROTECTION_RATE)));

    // 3. bundles and the handset affinity groups
    List<String> models = KestrelCatalog.HANDSET_MODELS;
    double[] modelShares = zipfShares(models.size(), 1.0);
    for (int m = 0; m < models.size(); m++) {
      String handset = KestrelCatalog.handset(models.get(m));
      String handsetCase = KestrelCatalog.handsetCase(models.get(m));
      String guard = KestrelCatalog.screenGuard(models.get(m));
      ItemSetDistribution purchase = either(HANDSET_RATE * modelShares[m],
          always(handset).and(bernoulli(CASE_WITH_HANDSET, handsetCase)).and(bernoulli(GUARD_WITH_HANDSET, guard)),
          nothing());
      ItemSetDistribution accessoryOnly = either(ACCESSORY_ONLY_RATE * modelShares[m],
          either(ACCESSORY_ONLY_CASE_SHARE, always(handsetCase), always(guard)), nothing());
      ItemSetDistribution module = purchase.and(accessoryOnly);
      modules.add(Module.steady(handset, module));
      planted.add(new PlantedPair(PlantedKind.BUNDLE, List.of(handset, handsetCase), startMillis, endMillis,
          module.lift(handset, handsetCase), Double.NaN,
          String.format(Locale.ROOT, "handset and its own case: confidence %.3f one way, %.3f the other;"
              + " handset in %.2f%% of baskets", module.confidence(handset, handsetCase),
              module.confidence(handsetCase, handset), 100 * module.probabilityOf(handset))));
      planted.add(new PlantedPair(PlantedKind.AFFINITY, List.of(handset, guard), startMillis, endMillis,
          module.lift(handset, guard), Double.NaN, String.format(Locale.ROOT, "handset and its screen guard:"
              + " confidence %.3f one way, %.3f the other", module.confidence(handset, guard),
              module.confidence(guard, handset))));
      planted.add(new PlantedPair(PlantedKind.AFFINITY, List.of(handsetCase, guard), startMillis, endMillis,
          module.lift(handsetCase, guard), Double.NaN, String.format(Locale.ROOT, "case and screen guard of one"
              + " handset: confidence %.3f one way, %.3f the other", module.confidence(handsetCase, guard),
              module.confidence(guard, handsetCase))));
    }

    // 4. plans: the family plan with the kids pack, away from prepaid top-ups
    ItemSetDistribution family = always(FAMILY_PLAN).and(bernoulli(KIDS_WITH_FAMILY, KIDS_PACK))
        .and(topups(TOPUP_FACTOR_WITH_FAMILY));
    ItemSetDistribution noFamily = bernoulli(KIDS_WITHOUT_FAMILY, KIDS_PACK).and(topups(1.0));
    ItemSetDistribution plans = either(FAMILY_PLAN_RATE, family, noFamily);
    modules.add(Module.steady("plans", plans));
    planted.add(new PlantedPair(PlantedKind.AFFINITY, List.of(FAMILY_PLAN, KIDS_PACK), startMillis, endMillis,
        plans.lift(FAMILY_PLAN, KIDS_PACK), Double.NaN, String.format(Locale.ROOT, "family plan with the kids"
            + " pack: confidence %.3f one way, %.3f the other", plans.confidence(FAMILY_PLAN, KIDS_PACK),
            plans.confidence(KIDS_PACK, FAMILY_PLAN))));
    for (int amount : KestrelCatalog.TOPUP_AMOUNTS) {
      String topup = KestrelCatalog.topup(amount);
      planted.add(new PlantedPair(PlantedKind.REPELLING, List.of(topup, FAMILY_PLAN), startMillis, endMillis,
          plans.lift(topup, FAMILY_PLAN), Double.NaN, String.format(Locale.ROOT, "prepaid top-up and postpaid"
              + " family plan: the plan cuts the top-up's rate to %.0f%%; top-up in %.2f%% of baskets",
              100 * TOPUP_FACTOR_WITH_FAMILY, 100 * plans.probabilityOf(topup))));
    }

    // 5. noise: the flash sale
    long flashFrom = config.millisAt(FLASH_SALE_DAY, 0);
    long flashTo = config.millisAt(FLASH_SALE_DAY + 1, 0);
    modules.add(Module.during("charger", flashFrom, flashTo, bernoulli(FLASH_SALE_RATE, FLASH_CHARGER),
        bernoulli(CHARGER_RATE, FLASH_CHARGER)));
    planted.add(new PlantedPair(PlantedKind.NOISE_POPULARITY, List.of(FLASH_CHARGER), flashFrom, flashTo, 1.0,
        1.0, String.format(Locale.ROOT, "flash sale: the charger's basket share rises from %.3f to %.3f;"
            + " it stays independent of every other item", CHARGER_RATE, FLASH_SALE_RATE)));

    Set<String> scripted = new LinkedHashSet<>();
    for (Module module : modules) {
      for (ItemSetDistribution phase : module.phases()) {
        scripted.addAll(phase.items());
      }
    }
    if (!KestrelCatalog.INSTANCE.items().containsAll(scripted)) {
      throw new IllegalStateException("scripted items missing from the catalog");
    }
    planted.removeIf(pair -> pair.startMillis() >= endMillis);
    this.modules = List.copyOf(modules);
    this.scriptedItems = Collections.unmodifiableSet(scripted);
    this.planted = List.copyOf(planted);
  }

  /** Every top-up independently, at {@code factor} times its usual rate. */
  private static ItemSetDistribution topups(double factor) {
    ItemSetDistribution topups = nothing();
    for (int i = 0; i < KestrelCatalog.TOPUP_AMOUNTS.size(); i++) {
      topups = topups.and(bernoulli(factor * TOPUP_RATE * TOPUP_SHARES[i],
          KestrelCatalog.topup(KestrelCatalog.TOPUP_AMOUNTS.get(i))));
    }
    return topups;
  }

  /** Shares {@code 1/(r+1)^exponent}, normalized, for ranks {@code 0..n-1}. */
  static double[] zipfShares(int n, double exponent) {
    double[] shares = new double[n];
    double sum = 0;
    for (int r = 0; r < n; r++) {
      shares[r] = StrictMath.pow(r + 1, -exponent); // StrictMath: same on every JVM
      sum += shares[r];
    }
    for (int r = 0; r < n; r++) {
      shares[r] /= sum;
    }
    return shares;
  }

  /**
   * The probability q of drawing a and b together such that the mixture "with q both, else a with
   * {@code rateA} and b with {@code rateB} independently" has expected lift {@code lift}.
   *
   * <p>With {@code A = q + (1−q)·ra}, {@code B = q + (1−q)·rb} and {@code AB = q + (1−q)·ra·rb}, lift·A·B = AB
   * is the quadratic {@code L(1−ra)(1−rb)·q² + (L(ra(1−rb) + rb(1−ra)) − (1 − ra·rb))·q + (L−1)·ra·rb = 0}; its
   * smaller root is the branch that rises from independence at q = 0. The lift peaks (near
   * {@code 1/(4r(1−r))} for equal rates r) and a larger target has no solution.
   *
   * @throws IllegalArgumentException when {@code lift <= 1} or it is out of reach for these rates
   */
  static double jointShareFor(double lift, double rateA, double rateB) {
    if (!(lift > 1)) {
      throw new IllegalArgumentException("a planted joint share raises lift above 1, got " + lift);
    }
    double a2 = lift * (1 - rateA) * (1 - rateB);
    double a1 = lift * (rateA * (1 - rateB) + rateB * (1 - rateA)) - (1 - rateA * rateB);
    double a0 = (lift - 1) * rateA * rateB;
    double discriminant = a1 * a1 - 4 * a2 * a0;
    if (discriminant < 0) {
      throw new IllegalArgumentException("lift " + lift + " is out of reach with rates " + rateA + ", " + rateB);
    }
    double joint = (-a1 - Math.sqrt(discriminant)) / (2 * a2);
    if (!(joint >= 0 && joint <= 1)) {
      throw new IllegalArgumentException("lift " + lift + " is out of reach with rates " + rateA + ", " + rateB);
    }
    return joint;
  }
}
