package org.pairpulse.ops.tools.drift;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.EnumSet;
import java.util.HashMap;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.function.LongPredicate;
import org.junit.jupiter.api.Test;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;

/** The generator plants what it says: exact counts over the planted intervals against the model's probabilities. */
class DriftStreamTest {
  static final long HOUR = DriftStream.HOUR_MILLIS;
  static final long DAY = DriftStream.DAY_MILLIS;
  static final TrafficLevel LEVEL = TrafficLevel.QUIET.scaled(0.5);

  /** Baskets, item counts and co-occurrence counts of two items over the baskets whose time passes a filter. */
  static final class Tally {
    long baskets;
    long a;
    long b;
    long both;

    static Tally of(Iterable<ReplayBasket> stream, String a, String b, LongPredicate when) {
      Tally tally = new Tally();
      for (ReplayBasket basket : stream) {
        if (when.test(basket.eventMillis())) {
          boolean hasA = basket.items().contains(a);
          boolean hasB = basket.items().contains(b);
          tally.baskets++;
          tally.a += hasA ? 1 : 0;
          tally.b += hasB ? 1 : 0;
          tally.both += hasA && hasB ? 1 : 0;
        }
      }
      return tally;
    }
  }

  /** |observed − n·p| within 4.5 binomial standard deviations. */
  static void assertShare(double p, long observed, long n, String what) {
    double sd = Math.sqrt(n * p * (1 - p));
    assertTrue(Math.abs(observed - n * p) <= 4.5 * sd + 1, what + ": " + observed + " of " + n + ", expected " + n * p);
  }

  static double together(DriftShape shape, double pi) {
    return pi + (1 - pi) * shape.ownA * shape.ownB;
  }

  static double own(double share, double pi) {
    return pi + (1 - pi) * share;
  }

  @Test
  void backgroundShapeAndDeterminism() {
    DriftStream stream = new DriftStream(3, LEVEL, DriftStream.DEFAULT_START, 1, EnumSet.of(DriftShape.STEADY_PAIR), -1);
    Map<String, Integer> counts = new HashMap<>();
    long baskets = 0;
    long items = 0;
    long previous = Long.MIN_VALUE;
    for (ReplayBasket basket : stream) {
      assertTrue(basket.eventMillis() >= previous, "event times never decrease");
      previous = basket.eventMillis();
      assertTrue(basket.items().size() >= 1 && basket.items().size() <= 10, basket.toString());
      assertEquals(basket.items().size(), basket.items().stream().distinct().count(), "distinct items");
      baskets++;
      items += basket.items().size();
      for (String item : basket.items()) {
        assertTrue(item.matches("item-\\d{5}"), item);
        counts.merge(item, 1, Integer::sum);
      }
    }
    assertShare(1, baskets, baskets, "");
    assertEquals(stream.expectedBaskets(), baskets, 5 * Math.sqrt(stream.expectedBaskets()));
    double meanItems = items / (double) baskets;
    assertTrue(meanItems > 3.2 && meanItems < 3.4, "mean items " + meanItems); // 3.23 background + 0.04 planted
    assertTrue(counts.size() > 3000 && counts.size() <= DriftStream.BACKGROUND_ITEMS + 2, "items " + counts.size());
    Iterator<ReplayBasket> one = stream.iterator();
    Iterator<ReplayBasket> two = stream.iterator();
    for (int i = 0; i < 1000; i++) {
      assertEquals(one.next(), two.next());
    }
  }

  @Test
  void suddenPairRateAndItemsMatchTheModel() {
    DriftShape shape = DriftShape.SUDDEN;
    DriftStream stream = DriftFamily.member(shape, 5, LEVEL);
    PlantedPair truth = stream.truth().get(0).pair();
    assertEquals(PlantedKind.EMERGING, truth.kind());
    long change = stream.startMillis() + 2 * DAY + 20 * HOUR;
    assertEquals(change, truth.startMillis());
    String a = truth.items().get(0);
    String b = truth.items().get(1);
    Tally before = Tally.of(stream, a, b, t -> t < change);
    Tally after = Tally.of(stream, a, b, t -> t >= change);
    assertShare(together(shape, 0), before.both, before.baskets, "pair before");
    assertShare(together(shape, shape.pairShare), after.both, after.baskets, "pair after");
    assertShare(own(shape.ownA, 0), before.a, before.baskets, "a before");
    assertShare(own(shape.ownA, shape.pairShare), after.a, after.baskets, "a after");
    assertShare(own(shape.ownB, shape.pairShare), after.b, after.baskets, "b after");
    assertEquals(DriftStream.lift(shape.ownA, shape.ownB, shape.pairShare), truth.expectedLift(), 1e-12);
  }

  @Test
  void gradualPairRampsLinearly() {
    DriftShape shape = DriftShape.GRADUAL;
    DriftStream stream = DriftFamily.member(shape, 6, TrafficLevel.QUIET);
    PlantedPair truth = stream.truth().get(0).pair();
    long from = truth.startMillis();
    // first half of the ramp: π averages 1/4 of the top; second half 3/4; after the ramp, the top
    Tally first = Tally.of(stream, truth.items().get(0), truth.items().get(1), t -> t >= from && t < from + 4 * HOUR);
    Tally flat = Tally.of(stream, truth.items().get(0), truth.items().get(1), t -> t >= from + 8 * HOUR);
    double firstShare = first.both / (double) first.baskets;
    assertTrue(firstShare > 0.1 * shape.pairShare && firstShare < 0.5 * shape.pairShare, "first half " + firstShare);
    assertShare(together(shape, shape.pairShare), flat.both, flat.baskets, "after the ramp");
  }

  @Test
  void rideOnItemRisesWithThePairAndFallsWithIt() {
    DriftShape shape = DriftShape.RIDE_ON;
    DriftStream stream = DriftFamily.member(shape, 7, LEVEL);
    PlantedPair truth = stream.truth().get(0).pair();
    String a = stream.itemsOf(shape).get(0);
    String b = stream.itemsOf(shape).get(1);
    String rider = truth.description().contains("own shares " + a + " 0.01500") ? b : a;
    String other = rider.equals(a) ? b : a;
    Tally before = Tally.of(stream, other, rider, t -> t < truth.startMillis());
    Tally after = Tally.of(stream, other, rider, t -> t >= truth.startMillis());
    assertShare(shape.ownB, before.b, before.baskets, "rider before");
    assertShare(own(shape.ownB, shape.pairShare), after.b, after.baskets, "rider after");
    assertTrue(after.b / (double) after.baskets > 5 * before.b / (double) before.baskets, "the rider's count rises");
    assertTrue(after.both > 0.8 * after.b, "the rider is mostly bought with the pair: " + after.both + " of " + after.b);
    DriftShape fading = DriftShape.FADING_RIDE_ON;
    DriftStream ends = DriftFamily.member(fading, 8, LEVEL);
    PlantedPair end = ends.truth().get(0).pair();
    String endRider = end.description().contains("own shares " + end.items().get(0) + " 0.01500")
        ? end.items().get(1) : end.items().get(0);
    String endOther = endRider.equals(end.items().get(0)) ? end.items().get(1) : end.items().get(0);
    Tally on = Tally.of(ends, endOther, endRider, t -> t < end.endMillis());
    Tally off = Tally.of(ends, endOther, endRider, t -> t >= end.endMillis());
    assertTrue(off.b / (double) off.baskets < 0.25 * on.b / (double) on.baskets, "the rider's count falls with the pair");
    assertShare(together(fading, 0), off.both, off.baskets, "pair after its end");
  }

  @Test
  void newPopularPairWasNeverBoughtTogetherAndLandsInThePromotionBand() {
    DriftShape shape = DriftShape.NEW_POPULAR;
    DriftStream stream = DriftFamily.member(shape, 9, LEVEL);
    PlantedPair truth = stream.truth().get(0).pair();
    String a = truth.items().get(0);
    String b = truth.items().get(1);
    Tally before = Tally.of(stream, a, b, t -> t < truth.startMillis());
    Tally after = Tally.of(stream, a, b, t -> t >= truth.startMillis());
    assertEquals(0, before.both);
    assertTrue(before.a > 0.02 * before.baskets && before.b > 0.02 * before.baskets, "both popular before");
    double confidence = after.both / (double) after.a;
    assertTrue(confidence >= 0.3 && confidence <= 0.5, "confidence " + confidence);
    assertShare(together(shape, shape.pairShare), after.both, after.baskets, "pair after");
  }

  @Test
  void spikeItemsPairsStayAtLiftOne() {
    DriftShape shape = DriftShape.POPULARITY_SPIKE;
    DriftStream stream = DriftFamily.member(shape, 10, TrafficLevel.QUIET);
    PlantedPair truth = stream.truth().get(0).pair();
    String spike = truth.items().get(0);
    // the most popular background item: the most frequent item of the first 20,000 baskets
    Map<String, Integer> counts = new HashMap<>();
    Iterator<ReplayBasket> head = stream.iterator();
    for (int i = 0; i < 20_000; i++) {
      head.next().items().forEach(item -> counts.merge(item, 1, Integer::sum));
    }
    String top = counts.entrySet().stream().max(Map.Entry.comparingByValue()).orElseThrow().getKey();
    Tally in = Tally.of(stream, spike, top, truth::covers);
    Tally out = Tally.of(stream, spike, top, t -> !truth.covers(t));
    assertShare(DriftShape.SPIKE_SHARE, in.a, in.baskets, "spike share");
    assertShare(shape.ownA, out.a, out.baskets, "share outside");
    for (Tally tally : List.of(in, out)) {
      double lift = tally.both * (double) tally.baskets / ((double) tally.a * tally.b);
      // lift 1 up to sampling error: n_ab is about 1,000 inside the spike, so ±4.5σ is about ±0.15
      double tolerance = 4.5 / Math.sqrt(tally.both);
      assertEquals(1.0, lift, tolerance, "lift of the spike item with " + top);
    }
  }

  @Test
  void rareTrapHasItsHandfulAndBundleIsNearCertain() {
    DriftStream trap = DriftFamily.member(DriftShape.RARE_TRAP, 11, LEVEL);
    PlantedPair truth = trap.truth().get(0).pair();
    assertEquals(PlantedKind.RARE_TRAP, truth.kind());
    Tally inside = Tally.of(trap, truth.items().get(0), truth.items().get(1), truth::covers);
    Tally all = Tally.of(trap, truth.items().get(0), truth.items().get(1), t -> true);
    assertEquals(DriftShape.TRAP_BASKETS, inside.both);
    assertTrue(all.both <= DriftShape.TRAP_BASKETS + 1, "a handful in all: " + all.both);
    DriftStream bundle = DriftFamily.member(DriftShape.STEADY_BUNDLE, 12, LEVEL);
    PlantedPair pair = bundle.truth().get(0).pair();
    for (int day = 0; day < bundle.days(); day++) {
      long from = bundle.startMillis() + day * DAY;
      Tally tally = Tally.of(bundle, pair.items().get(0), pair.items().get(1), t -> t >= from && t < from + DAY);
      assertTrue(tally.both >= 0.95 * tally.a && tally.both >= 0.95 * tally.b, "day " + day + ": " + tally.both + " of "
          + tally.a + ", " + tally.b);
    }
  }

  @Test
  void trafficShiftMovesBasketsOnly() {
    DriftStream stream = DriftFamily.member(DriftShape.TRAFFIC_SHIFT, 13, LEVEL);
    long[] shift = stream.trafficShift();
    assertEquals(stream.startMillis() + 2 * DAY, shift[0]);
    Tally weekday = Tally.of(stream, "x", "y", t -> t >= stream.startMillis() + DAY && t < shift[0]);
    Tally weekend = Tally.of(stream, "x", "y", t -> t >= shift[0] && t < shift[0] + DAY);
    double ratio = weekend.baskets / (double) weekday.baskets;
    assertEquals(DriftShape.SHIFTED_TRAFFIC, ratio, 0.02);
    assertTrue(stream.truth().isEmpty(), "a traffic shift plants no pair");
  }

  @Test
  void fullStreamPlantsEveryShapeOnDisjointItems() {
    DriftStream stream = DriftFamily.stream(1, TrafficLevel.QUIET, DriftFamily.DEFAULT_DAYS);
    assertEquals(DriftShape.values().length - 1, stream.truth().size());
    long distinct = stream.truth().stream().flatMap(p -> p.pair().items().stream()).distinct().count();
    assertEquals(stream.truth().stream().mapToLong(p -> p.pair().items().size()).sum(), distinct);
    assertEquals(7, stream.truth().stream().filter(DriftPlant::isChange).count());
    for (DriftPlant plant : stream.truth()) {
      if (plant.isChange()) {
        long change = plant.changeMillis();
        assertEquals(plant.shape().hour(), (change - stream.startMillis()) % DAY / HOUR, plant.shape().toString());
        assertEquals(plant.shape().fullDay(), (change - stream.startMillis()) / DAY, plant.shape().toString());
      }
    }
  }
}
