package org.pairpulse.ops.tools.drift;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.EnumSet;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.NoSuchElementException;
import java.util.Objects;
import java.util.Set;
import java.util.SplittableRandom;
import org.pairpulse.ops.analysis.backtest.ReplayBasket;
import org.pairpulse.ops.tools.scenario.PlantedKind;
import org.pairpulse.ops.tools.scenario.PlantedPair;
import org.pairpulse.sketch.fixtures.BasketSizes;
import org.pairpulse.sketch.fixtures.BasketStream;
import org.pairpulse.sketch.fixtures.ZipfSampler;

/**
 * One seeded stream of the drift family: background Zipf traffic with a day/night cycle, and, on disjoint invented
 * items, the planted {@link DriftShape}s whose ground truth is {@link #truth()}. Test and benchmark data only.
 *
 * <h2>Background</h2>
 * {@value #BACKGROUND_ITEMS} items with Zipf weights {@code 1/(rank+1)} (exponent {@value #ZIPF_EXPONENT}); a basket
 * holds 1 to 8 distinct background items (weights {@link #SIZE_WEIGHTS}, mean 3.23), drawn by weight without
 * replacement. Background pairs are not exactly at lift 1 (a basket size mixes them: big baskets hold more of
 * everything, about lift 1.2 to 1.4), but their association never changes over time: the background is stationary
 * per basket.
 *
 * <h2>Traffic</h2>
 * Baskets arrive as a Poisson process whose rate is {@link TrafficLevel#peakBasketsPerHour()} times the day/night
 * curve {@link #HOURLY_SHARE} (1 at 20:00, 0.07 at 03:00–04:00, linear between hours, mean 0.46), times
 * {@link DriftShape#SHIFTED_TRAFFIC} over the two days of a {@link DriftShape#TRAFFIC_SHIFT}. Traffic moves N only:
 * every per-basket probability above and in {@link DriftShape} is independent of the traffic.
 *
 * <h2>Items</h2>
 * Ids {@code item-00000} to {@code item-0NNNN}: the background's ranks and the planted items get a seeded
 * permutation of the ids, so a planted item's id says nothing. Planted items never appear in the background. A basket
 * holds its 1–8 background items plus any planted items it draws (rarely more than one), so the planted items'
 * pairs with background items stay at lift 1.
 *
 * <p>Every {@link #iterator()} starts over from the seed: the same arguments give the same baskets in the same order.
 * Event times never decrease. Immutable; iterators are single-threaded.
 */
public final class DriftStream implements Iterable<ReplayBasket> {
  /** Day 0 of the family: a Monday, 00:00 event time. */
  public static final Instant DEFAULT_START = Instant.parse("2026-06-01T00:00:00Z");
  public static final int BACKGROUND_ITEMS = 5_000;
  public static final double ZIPF_EXPONENT = 1.0;
  /** Weights of basket sizes 1..8 (background items): mean 3.23. */
  static final double[] SIZE_WEIGHTS = {0.22, 0.22, 0.18, 0.13, 0.10, 0.07, 0.05, 0.03};
  /** The day/night curve: share of the peak rate at hh:00, linear in between (the Kestrel scenario's, peak 1). */
  static final double[] HOURLY_SHARE = {0.262, 0.167, 0.105, 0.071, 0.071, 0.095, 0.167, 0.286, 0.381, 0.429, 0.476,
      0.524, 0.571, 0.524, 0.476, 0.476, 0.524, 0.619, 0.762, 0.905, 1.0, 0.905, 0.667, 0.429};
  static final long HOUR_MILLIS = Duration.ofHours(1).toMillis();
  static final long DAY_MILLIS = Duration.ofDays(1).toMillis();
  private static final long TRAP_SPACING_MILLIS = Duration.ofMinutes(20).toMillis();

  private final long seed;
  private final TrafficLevel level;
  private final long startMillis;
  private final int days;
  private final Set<DriftShape> shapes;
  private final int memberDay;
  private final String[] ids;
  private final ZipfSampler zipf;
  private final BasketSizes sizes;
  private final List<OwnItem> ownItems = new ArrayList<>();
  private final List<PairModel> pairModels = new ArrayList<>();
  private final List<DriftPlant> truth = new ArrayList<>();
  private long[] trapMillis = new long[0];
  private int[] trapItems = new int[0];
  private long shiftFromMillis = Long.MAX_VALUE;
  private long shiftToMillis = Long.MAX_VALUE;

  /**
   * @param seed the random seed (item ids and baskets)
   * @param level the traffic level
   * @param start day 0, 00:00 (whole millisecond)
   * @param days simulated days, 1..60
   * @param shapes the shapes to plant (each on its own two items)
   * @param memberDay -1: each shape on its day of the full schedule ({@link DriftShape#fullDay()}); otherwise every
   *     change (or event) on this day, at the shape's hour
   */
  public DriftStream(long seed, TrafficLevel level, Instant start, int days, Set<DriftShape> shapes, int memberDay) {
    this.seed = seed;
    this.level = Objects.requireNonNull(level, "level");
    this.startMillis = start.toEpochMilli();
    if (days < 1 || days > 60) {
      throw new IllegalArgumentException("days must be in 1..60, got " + days);
    }
    if (memberDay < -1 || memberDay >= days) {
      throw new IllegalArgumentException("memberDay must be -1 or a day of the run, got " + memberDay);
    }
    this.days = days;
    this.shapes = Collections.unmodifiableSet(shapes.isEmpty() ? EnumSet.noneOf(DriftShape.class) : EnumSet.copyOf(shapes));
    this.memberDay = memberDay;
    int planted = 2 * this.shapes.size();
    int[] permutation = permutation(BACKGROUND_ITEMS + planted, new SplittableRandom(seed ^ 0x5DEECE66DL));
    ids = new String[permutation.length];
    int digits = Math.max(5, Integer.toString(permutation.length - 1).length());
    for (int i = 0; i < ids.length; i++) {
      ids[i] = String.format(Locale.ROOT, "item-%0" + digits + "d", permutation[i]);
    }
    zipf = new ZipfSampler(BACKGROUND_ITEMS, ZIPF_EXPONENT);
    sizes = BasketSizes.weights(SIZE_WEIGHTS);
    int next = BACKGROUND_ITEMS;
    for (DriftShape shape : this.shapes) {
      plant(shape, next, next + 1);
      next += 2;
    }
  }

  private static int[] permutation(int n, SplittableRandom random) {
    int[] values = new int[n];
    for (int i = 0; i < n; i++) {
      values[i] = i;
    }
    for (int i = n - 1; i > 0; i--) {
      int j = random.nextInt(i + 1);
      int swap = values[i];
      values[i] = values[j];
      values[j] = swap;
    }
    return values;
  }

  /** An item's own draw: probability {@code share}, or {@code spikeShare} over [spikeFrom, spikeTo). */
  private record OwnItem(int item, double share, double spikeShare, long spikeFromMillis, long spikeToMillis) {
    double at(long t) {
      return t >= spikeFromMillis && t < spikeToMillis ? spikeShare : share;
    }
  }

  /**
   * A pair event: both items with probability π(t): 0 before {@code rampFrom}, linear to {@code share} at
   * {@code rampTo}, {@code share} until {@code stop}, 0 from {@code stop} on. {@code exclusiveBefore}: before
   * {@code rampFrom} a basket whose own draws hold both items loses item b.
   */
  private record PairModel(int a, int b, double share, long rampFromMillis, long rampToMillis, long stopMillis,
      boolean exclusiveBefore) {
    double at(long t) {
      if (t < rampFromMillis || t >= stopMillis) {
        return 0;
      }
      if (t >= rampToMillis) {
        return share;
      }
      return share * (t - rampFromMillis) / (double) (rampToMillis - rampFromMillis);
    }
  }

  private void plant(DriftShape shape, int a, int b) {
    int day = memberDay >= 0 ? memberDay : shape.fullDay();
    long change = startMillis + day * DAY_MILLIS + shape.hour() * HOUR_MILLIS;
    long afterEnd = Math.max(endMillis(), change) + DAY_MILLIS; // "until after the run" (a change may lie beyond it)
    String ida = ids[a];
    String idb = ids[b];
    double lift = lift(shape.ownA, shape.ownB, shape.pairShare);
    String rates = String.format(Locale.ROOT, "own shares %s %.4g, %s %.4g; pair share %.4g (lift %.3g, confidence"
        + " %.2f / %.2f)", ida, shape.ownA, idb, shape.ownB, shape.pairShare, lift,
        confidence(shape.ownA, shape.ownB, shape.pairShare), confidence(shape.ownB, shape.ownA, shape.pairShare));
    switch (shape) {
      case SUDDEN, SUDDEN_QUIET, GRADUAL, RIDE_ON, NEW_POPULAR -> {
        long stop = shape.activeHours > 0 ? change + shape.activeHours * HOUR_MILLIS : afterEnd;
        boolean exclusive = shape == DriftShape.NEW_POPULAR;
        addOwn(a, shape.ownA);
        addOwn(b, shape.ownB);
        pairModels.add(new PairModel(a, b, shape.pairShare, change, change + shape.rampHours * HOUR_MILLIS, stop,
            exclusive));
        String ramp = shape.rampHours > 0 ? " ramping linearly over " + shape.rampHours + " h" : "";
        add(shape, new PlantedPair(PlantedKind.EMERGING, List.of(ida, idb), change, stop, lift, exclusive ? 0 : 1,
            shape.wireName() + ": emerging from " + Instant.ofEpochMilli(change) + ramp + (stop < afterEnd
                ? " until " + Instant.ofEpochMilli(stop) : "") + "; " + rates + (exclusive
                ? "; never together before" : "; independent before")));
      }
      case FADING, FADING_RIDE_ON, STEADY_PAIR, STEADY_BUNDLE -> {
        boolean fading = shape.kind() == PlantedKind.FADING;
        long stop = fading ? change : afterEnd;
        addOwn(a, shape.ownA);
        addOwn(b, shape.ownB);
        pairModels.add(new PairModel(a, b, shape.pairShare, Long.MIN_VALUE, Long.MIN_VALUE, stop, false));
        add(shape, new PlantedPair(shape.kind(), List.of(ida, idb), startMillis, fading ? stop : endMillis(), lift,
            fading ? 1 : Double.NaN, shape.wireName() + ": " + (fading ? "association ends at "
                + Instant.ofEpochMilli(stop) : "steady over the whole run") + "; " + rates));
      }
      case POPULARITY_SPIKE -> {
        long to = change + shape.activeHours * HOUR_MILLIS;
        ownItems.add(new OwnItem(a, shape.ownA, DriftShape.SPIKE_SHARE, change, to));
        add(shape, new PlantedPair(PlantedKind.NOISE_POPULARITY, List.of(ida), change, to, 1, 1, String.format(
            Locale.ROOT, "%s: %s's own share %.3g, %.3g over [%s, %s); independent of every item", shape.wireName(),
            ida, shape.ownA, DriftShape.SPIKE_SHARE, Instant.ofEpochMilli(change), Instant.ofEpochMilli(to))));
      }
      case RARE_TRAP -> {
        addOwn(a, shape.ownA);
        addOwn(b, shape.ownB);
        long to = change + shape.activeHours * HOUR_MILLIS;
        trapMillis = new long[DriftShape.TRAP_BASKETS];
        for (int i = 0; i < trapMillis.length; i++) {
          trapMillis[i] = change + i * TRAP_SPACING_MILLIS;
        }
        trapItems = new int[] {a, b};
        double baskets = expectedBaskets(change, to);
        double together = DriftShape.TRAP_BASKETS / baskets;
        double trapLift = (together + shape.ownA * shape.ownB) / ((together + shape.ownA) * (together + shape.ownB));
        add(shape, new PlantedPair(PlantedKind.RARE_TRAP, List.of(ida, idb), change, to, trapLift, 1, String.format(
            Locale.ROOT, "%s: %d baskets with both over [%s, %s) (of about %.0f); own shares %.2g each",
            shape.wireName(), DriftShape.TRAP_BASKETS, Instant.ofEpochMilli(change), Instant.ofEpochMilli(to), baskets,
            shape.ownA)));
      }
      case TRAFFIC_SHIFT -> {
        shiftFromMillis = change;
        shiftToMillis = change + shape.activeHours * HOUR_MILLIS;
      }
      default -> throw new AssertionError(shape);
    }
  }

  private void addOwn(int item, double share) {
    ownItems.add(new OwnItem(item, share, share, Long.MAX_VALUE, Long.MAX_VALUE));
  }

  private void add(DriftShape shape, PlantedPair pair) {
    truth.add(new DriftPlant(shape, pair));
  }

  /** The lift of a planted pair with own shares {@code a}, {@code b} and pair share {@code pi}. */
  static double lift(double a, double b, double pi) {
    double together = pi + (1 - pi) * a * b;
    return together / ((pi + (1 - pi) * a) * (pi + (1 - pi) * b));
  }

  /** The confidence {@code P(y | x)} of a planted pair with own shares {@code x}, {@code y} and pair share {@code pi}. */
  static double confidence(double x, double y, double pi) {
    return (pi + (1 - pi) * x * y) / (pi + (1 - pi) * x);
  }

  public long seed() {
    return seed;
  }

  public TrafficLevel level() {
    return level;
  }

  public int days() {
    return days;
  }

  public Set<DriftShape> shapes() {
    return shapes;
  }

  /** Day 0, 00:00, in epoch milliseconds. */
  public long startMillis() {
    return startMillis;
  }

  /** The end of the run (exclusive). */
  public long endMillis() {
    return startMillis + days * DAY_MILLIS;
  }

  /** A short name for people: level, seed, and the shape of a one-shape member. */
  public String name() {
    return level.name() + "/seed " + seed + (shapes.size() == 1 ? "/" + shapes.iterator().next().wireName() : "");
  }

  /** The planted facts, in {@link DriftShape} order; a {@link DriftShape#TRAFFIC_SHIFT} has none (see {@link #trafficShift()}). */
  public List<DriftPlant> truth() {
    return Collections.unmodifiableList(truth);
  }

  /** The interval [from, to) of the weekend traffic shift, or null when the stream has none. */
  public long[] trafficShift() {
    return shiftFromMillis == Long.MAX_VALUE ? null : new long[] {shiftFromMillis, shiftToMillis};
  }

  /** The planted item ids of a shape (two, or one for the spike), or an empty list when not planted here. */
  public List<String> itemsOf(DriftShape shape) {
    for (DriftPlant plant : truth) {
      if (plant.shape() == shape) {
        return plant.pair().items();
      }
    }
    return List.of();
  }

  /** The basket rate per hour at {@code t}. */
  public double basketsPerHour(long t) {
    long inDay = Math.floorMod(t - startMillis, DAY_MILLIS);
    int hour = (int) (inDay / HOUR_MILLIS);
    double fraction = (inDay - hour * HOUR_MILLIS) / (double) HOUR_MILLIS;
    double share = HOURLY_SHARE[hour] + (HOURLY_SHARE[(hour + 1) % 24] - HOURLY_SHARE[hour]) * fraction;
    double shift = t >= shiftFromMillis && t < shiftToMillis ? DriftShape.SHIFTED_TRAFFIC : 1.0;
    return level.peakBasketsPerHour() * share * shift;
  }

  /** The expected number of baskets over [from, to) (a sum over minutes). */
  public double expectedBaskets(long fromMillis, long toMillis) {
    double sum = 0;
    for (long t = fromMillis; t < toMillis; t += 60_000) {
      sum += basketsPerHour(t + 30_000) * Math.min(60_000, toMillis - t) / HOUR_MILLIS;
    }
    return sum;
  }

  /** The expected number of baskets of the whole run. */
  public double expectedBaskets() {
    return expectedBaskets(startMillis, endMillis());
  }

  @Override
  public Iterator<ReplayBasket> iterator() {
    return new Baskets();
  }

  private final class Baskets implements Iterator<ReplayBasket> {
    private final SplittableRandom random = new SplittableRandom(seed);
    private final BasketStream background = BasketStream.builder(random)
        .zipf(Arrays.copyOf(ids, BACKGROUND_ITEMS), zipf).sizes(sizes).build();
    private final String prefix = "df-" + level.name() + "-" + seed + "-";
    private final boolean[] present = new boolean[ids.length];
    private final List<String> items = new ArrayList<>(16);
    private double timeMillis = startMillis;
    private long count;
    private int nextTrap;
    private ReplayBasket next;

    Baskets() {
      advance();
    }

    private void advance() {
      // exponential gaps at the rate of the current instant (the rate moves little within a gap)
      double rate = basketsPerHour((long) timeMillis) / HOUR_MILLIS;
      timeMillis += -Math.log(1.0 - random.nextDouble()) / rate;
      long t = (long) timeMillis;
      next = t < endMillis() ? basket(t) : null;
    }

    private ReplayBasket basket(long t) {
      items.clear();
      items.addAll(background.basket(t)); // the shared stream's background: a size, distinct Zipf items
      for (OwnItem own : ownItems) {
        if (random.nextDouble() < own.at(t)) {
          present[own.item()] = true;
        }
      }
      for (PairModel pair : pairModels) {
        if (pair.exclusiveBefore() && t < pair.rampFromMillis() && present[pair.a()]) {
          present[pair.b()] = false;
        }
        if (random.nextDouble() < pair.at(t)) {
          present[pair.a()] = true;
          present[pair.b()] = true;
        }
      }
      if (nextTrap < trapMillis.length && t >= trapMillis[nextTrap]) {
        nextTrap++;
        present[trapItems[0]] = true;
        present[trapItems[1]] = true;
      }
      for (int item = BACKGROUND_ITEMS; item < present.length; item++) {
        if (present[item]) {
          present[item] = false;
          items.add(ids[item]);
        }
      }
      return new ReplayBasket(prefix + (++count), t, items, Map.of());
    }

    @Override
    public boolean hasNext() {
      return next != null;
    }

    @Override
    public ReplayBasket next() {
      if (next == null) {
        throw new NoSuchElementException();
      }
      ReplayBasket basket = next;
      advance();
      return basket;
    }
  }
}
