package org.pairpulse.ops.tools.scenario;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.NoSuchElementException;
import java.util.SplittableRandom;
import java.util.Spliterator;
import java.util.Spliterators;
import java.util.stream.Stream;
import java.util.stream.StreamSupport;
import org.pairpulse.sketch.fixtures.ZipfSampler;

/**
 * Plays the invented Kestrel Connect scenario (see {@code shared/SCENARIO.md}): seeded baskets of a fictional
 * operator's app, web shop and stores, in simulated event time, with planted associations whose times and
 * lifts are known in advance ({@link #groundTruth()}). Demo and test data only.
 *
 * <h2>Use</h2>
 * <pre>{@code
 * ScenarioGenerator scenario = new ScenarioGenerator(ScenarioConfig.defaults());
 * for (ScenarioBasket basket : scenario) { … }          // or scenario.iterator(), scenario.stream()
 * ScenarioGroundTruth truth = scenario.groundTruth();
 * ScenarioFiles.writeAll(scenario, Path.of("demo-data")); // baskets.csv, baskets.jsonl, ground-truth.json
 * }</pre>
 * Every {@link #iterator()} starts over from the seed: the same config gives the same baskets, in the same
 * order, on every call and every machine.
 *
 * <h2>Time</h2>
 * Event times are simulated: {@link ScenarioConfig#start()} is midnight of day 0 on the simulated clock,
 * day {@code d} begins {@code d × 24 h} later, and the diurnal rhythm, store hours and planted events all use
 * that clock. The generator never sleeps or reads a wall clock; an accelerated replay (one simulated day a
 * minute, say) paces the iterator's output by its event times. Baskets arrive as a Poisson process whose
 * rate follows the hour of day (quiet around 04:00, peak around 20:00) with mean
 * {@link ScenarioConfig#basketsPerMinute()}; they come out in arrival order, so event times never decrease
 * unless {@link ScenarioConfig#outOfOrderMillis()} moves each one back by up to that much.
 *
 * <h2>Baskets</h2>
 * 1 to 8 distinct items (mean about 3.2) from a catalog of about 2,000 ({@link #catalog()}): a Zipf-like
 * background plus the scripted items of the planted events; attributes {@code channel} (app, web, store;
 * stores open 09:00–20:00) and {@code region} (capital, north, south, coast, highlands), independent of
 * the items.
 *
 * <h2>Planted events (day 0 = start)</h2>
 * <ol>
 *   <li>EMERGING {@code pack-esports} + {@code boost-lowlatency-5gb}: lift 6 in [day 3 12:00, day 5 12:00)
 *       (a popular online game opens a new season), 1 before and after.
 *   <li>EMERGING from nothing {@code handset-kestrel-two} + {@code case-kestrel-two-launch}: the launch case,
 *       never sold before, from day 3 15:00 to the end, in a third of the handset's baskets (lift about 61).
 *   <li>FADING {@code roam-zone-b-day} + {@code protect-travel}: lift 5 until day 5 00:00, then 1.
 *   <li>BUNDLE each {@code handset-<model>} + {@code case-<model>} (8 models): confidence about 0.98 both
 *       ways, all run long.
 *   <li>REPELLING each {@code topup-prepaid-<amount>} + {@code plan-postpaid-family}: lift about 0.05.
 *   <li>NOISE_POPULARITY {@code charger-usb-c-65w}: basket share 0.01, 0.08 on day 4, independent of all.
 *   <li>AFFINITY (steady, listed for evaluation): handset + guard, case + guard, family plan + kids pack.
 * </ol>
 * The exact rates and the model are in {@link ScenarioScript}'s comment (package-private).
 *
 * <h2>Threading</h2>
 * A generator is immutable and may be shared; each iterator is single-threaded state. Independent
 * iterators may run on different threads.
 */
public final class ScenarioGenerator implements Iterable<ScenarioBasket> {
  /** Relative basket rate at hh:00 on the simulated clock, linear in between; normalized to mean 1 below. */
  private static final double[] HOURLY_RATE = {0.55, 0.35, 0.22, 0.15, 0.15, 0.2, 0.35, 0.6, 0.8, 0.9, 1.0, 1.1,
      1.2, 1.1, 1.0, 1.0, 1.1, 1.3, 1.6, 1.9, 2.1, 1.9, 1.4, 0.9};
  private static final int STORE_OPENS_HOUR = 9;
  private static final int STORE_CLOSES_HOUR = 20;
  private static final String[] CHANNELS = {"app", "web", "store"};
  private static final double[] CHANNEL_SHARES_STORE_OPEN = {0.5, 0.3, 0.2};
  private static final double[] CHANNEL_SHARES_STORE_CLOSED = {0.65, 0.35, 0.0};
  private static final String[] REGIONS = {"capital", "north", "south", "coast", "highlands"};
  private static final double[] REGION_SHARES = {0.3, 0.2, 0.2, 0.15, 0.15};
  private static final double MINUTE_MILLIS = 60_000.0;

  private final ScenarioConfig config;
  private final ScenarioScript script;
  /** Background items, most popular first, and the shared samplers of their Zipf law and of the background's size. */
  private final String[] background;
  private final ZipfSampler backgroundZipf;
  private final ZipfSampler backgroundSizes;
  private final double[] diurnal;
  private final double diurnalMax;
  /** The attributes of channel c and region r at {@code c × REGIONS.length + r}, shared by all baskets. */
  private final List<Map<String, String>> attributeSets;

  public ScenarioGenerator(ScenarioConfig config) {
    this.config = config;
    this.script = new ScenarioScript(config);
    List<String> pool = new ArrayList<>(KestrelCatalog.INSTANCE.popularityOrder());
    pool.removeAll(script.scriptedItems);
    background = pool.toArray(new String[0]);
    backgroundZipf = new ZipfSampler(background.length, ScenarioScript.ZIPF_EXPONENT);
    backgroundSizes = ZipfSampler.ofWeights(ScenarioScript.BACKGROUND_SIZE_PROBABILITIES);
    double mean = Arrays.stream(HOURLY_RATE).average().orElseThrow();
    diurnal = Arrays.stream(HOURLY_RATE).map(rate -> rate / mean).toArray();
    diurnalMax = Arrays.stream(diurnal).max().orElseThrow();
    attributeSets = attributeSets();
  }

  public ScenarioConfig config() {
    return config;
  }

  /** The planted pairs of this config, with their times and expected lifts. */
  public ScenarioGroundTruth groundTruth() {
    return new ScenarioGroundTruth(config, script.planted);
  }

  /** Every item id of the catalog (about 2,000), family by family. */
  public List<String> catalog() {
    return KestrelCatalog.INSTANCE.items();
  }

  /** A fresh pass over the scenario from its seed, in arrival order. */
  @Override
  public Iterator<ScenarioBasket> iterator() {
    return new Baskets();
  }

  /** {@link #iterator()} as a sequential, ordered stream. */
  public Stream<ScenarioBasket> stream() {
    return StreamSupport.stream(Spliterators.spliteratorUnknownSize(iterator(),
        Spliterator.ORDERED | Spliterator.NONNULL | Spliterator.IMMUTABLE), false);
  }

  /** The relative basket rate at {@code eventMillis} (mean 1 over a simulated day). */
  double diurnalFactor(long eventMillis) {
    long dayMillis = Math.floorMod(eventMillis - config.startMillis(), ScenarioConfig.DAY_MILLIS);
    double hours = dayMillis / (double) ScenarioConfig.HOUR_MILLIS;
    int hour = (int) hours;
    double fraction = hours - hour;
    return diurnal[hour] * (1 - fraction) + diurnal[(hour + 1) % 24] * fraction;
  }

  /** One pass: three independent random streams (arrivals, contents, jitter) split from the seed. */
  private final class Baskets implements Iterator<ScenarioBasket> {
    private final SplittableRandom arrivals;
    private final SplittableRandom contents;
    private final SplittableRandom jitter;
    private final double meanCandidateGapMillis = MINUTE_MILLIS / (config.basketsPerMinute() * diurnalMax);
    private final long startMillis = config.startMillis();
    private final long endMillis = config.endMillis();
    private final String[] scratch = new String[ScenarioScript.MAX_BASKET_ITEMS];
    /** Time of the next arrival since the start, in (fractional) milliseconds; NaN when the run is over. */
    private double nextOffsetMillis;
    private long sequence;

    Baskets() {
      SplittableRandom root = new SplittableRandom(config.seed());
      arrivals = root.split();
      contents = root.split();
      jitter = root.split();
      nextOffsetMillis = 0;
      advance();
    }

    /** Thinning (Lewis and Shedler 1979): candidates at the peak rate, each kept with rate(t) / peak. */
    private void advance() {
      double t = nextOffsetMillis;
      while (true) {
        t += -StrictMath.log(1 - arrivals.nextDouble()) * meanCandidateGapMillis; // StrictMath: same on every JVM
        if (t >= endMillis - startMillis) {
          nextOffsetMillis = Double.NaN;
          return;
        }
        if (arrivals.nextDouble() * diurnalMax < diurnalFactor(startMillis + (long) t)) {
          nextOffsetMillis = t;
          return;
        }
      }
    }

    @Override
    public boolean hasNext() {
      return !Double.isNaN(nextOffsetMillis);
    }

    @Override
    public ScenarioBasket next() {
      if (!hasNext()) {
        throw new NoSuchElementException("the scenario ended at " + config.endMillis());
      }
      long arrivalMillis = startMillis + (long) nextOffsetMillis;
      advance();
      long eventMillis = arrivalMillis;
      if (config.outOfOrderMillis() > 0) {
        eventMillis = Math.max(startMillis, arrivalMillis - jitter.nextLong(config.outOfOrderMillis() + 1));
      }
      sequence++;
      return new ScenarioBasket(basketId(sequence), eventMillis, items(eventMillis), attributes(eventMillis));
    }

    private List<String> items(long eventMillis) {
      int size = 0;
      for (ScenarioScript.Module module : script.modules) {
        for (String item : module.at(eventMillis).sample(contents)) {
          if (size < scratch.length) {
            scratch[size++] = item;
          }
        }
      }
      int backgroundSize = Math.min(backgroundSizes.sample(contents.nextDouble()) + 1, scratch.length - size);
      int scripted = size;
      for (int drawn = 0, attempts = 0; drawn < backgroundSize && attempts < 1000; attempts++) {
        String item = background[backgroundZipf.sample(contents.nextDouble())];
        if (!contains(scratch, scripted, size, item)) {
          scratch[size++] = item;
          drawn++;
        }
      }
      String[] items = Arrays.copyOf(scratch, size);
      Arrays.sort(items);
      return Arrays.asList(items);
    }

    private Map<String, String> attributes(long eventMillis) {
      long hour = Math.floorMod(eventMillis - startMillis, ScenarioConfig.DAY_MILLIS) / ScenarioConfig.HOUR_MILLIS;
      boolean storeOpen = hour >= STORE_OPENS_HOUR && hour < STORE_CLOSES_HOUR;
      int channel = pick(storeOpen ? CHANNEL_SHARES_STORE_OPEN : CHANNEL_SHARES_STORE_CLOSED, contents.nextDouble());
      int region = pick(REGION_SHARES, contents.nextDouble());
      return attributeSets.get(channel * REGIONS.length + region);
    }
  }

  /** Whether {@code item} is among {@code items[from..to)} (background items are drawn after the scripted). */
  private static boolean contains(String[] items, int from, int to, String item) {
    for (int i = from; i < to; i++) {
      if (items[i].equals(item)) {
        return true;
      }
    }
    return false;
  }

  /** {@code kc-} and the sequence number, zero-padded to 9 digits (longer when it must be). */
  static String basketId(long sequence) {
    String digits = Long.toString(sequence);
    StringBuilder id = new StringBuilder(12).append("kc-");
    for (int pad = digits.length(); pad < 9; pad++) {
      id.append('0');
    }
    return id.append(digits).toString();
  }

  private static int pick(double[] shares, double u) {
    double sum = 0;
    for (int i = 0; i < shares.length; i++) {
      sum += shares[i];
      if (u < sum) {
        return i;
      }
    }
    for (int i = shares.length - 1; ; i--) { // rounding left u above the sum: the last possible choice
      if (shares[i] > 0) {
        return i;
      }
    }
  }

  private static List<Map<String, String>> attributeSets() {
    List<Map<String, String>> sets = new ArrayList<>();
    for (String channel : CHANNELS) {
      for (String region : REGIONS) {
        Map<String, String> attributes = new LinkedHashMap<>();
        attributes.put("channel", channel);
        attributes.put("region", region);
        sets.add(Collections.unmodifiableMap(attributes));
      }
    }
    return List.copyOf(sets);
  }
}
