package org.pairpulse.ops.tools.scenario;

import java.util.ArrayList;
import java.util.Collections;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;

/**
 * The invented Kestrel Connect catalog: about 2,000 lower-case slugs in families (plans, top-ups, data
 * boosts, roaming passes, content packs, film and series rentals, devices and accessories, protection,
 * cloud storage, smart-home add-ons, international calling, music albums). It is fixed: it does not depend on the seed,
 * so item ids are stable across runs.
 *
 * <p>Names are ours: device models are coined words (checked against no product we know of) or plain descriptions
 * in the trade's terms (Wi-Fi generation, 5G, FWA); film, series and album titles follow the pattern
 * {@code <word>-<word>-no-<n>} (a word pair with a catalogue number), which no well-known work's title has, so
 * that the generator never produces the two-word title of a real film, series or album.
 *
 * <p>{@link #popularityOrder()} interleaves the families round-robin, each family listed most popular first,
 * so the head of a Zipf law over that order holds the first items of every family and the tail holds the
 * long families' last items (mostly rentals).
 */
final class KestrelCatalog {
  /** The handset models that carry the planted bundle (handset + own case) and the screen-guard affinity. */
  static final List<String> HANDSET_MODELS = List.of("orvane-x2", "quarro-7", "kestrel-one", "orvane-x2-max",
      "myrren-s", "velk-5g", "quarro-7-mini", "myrren-s-lite");
  /**
   * The new handset of the second emerging pair: on sale from the start, without a case of its own until its
   * launch case arrives on day 3 ({@link #launchCase}).
   */
  static final String LAUNCH_MODEL = "kestrel-two";
  /** Prepaid top-up amounts, most popular first; every top-up repels the postpaid family plan. */
  static final List<Integer> TOPUP_AMOUNTS = List.of(10, 20, 15, 30, 50);

  private static final String[] TABLET_MODELS = {"tesk-10", "tesk-12-max", "tesk-mini", "vorla-11", "vorla-8",
      "vorla-junior-7", "tesk-10-lte", "vorla-13", "myrren-tab", "velk-tab-rugged"};
  private static final String[] WATCH_MODELS = {"dalvo-w3", "dalvo-w3-lte", "quillet-2", "quillet-2-sport",
      "dalvo-junior", "quillet-trek", "dalvo-w2", "quillet-classic"};
  private static final String[] EARBUD_MODELS = {"orvane-e1", "orvane-e1-max", "murro-air", "murro-sport",
      "murro-anc", "murro-junior"};
  private static final String[] ROUTER_MODELS = {"wifi6-dual-band", "wifi7-tri-band", "mesh-node-wifi6",
      "mesh-node-wifi7", "fwa-5g", "travel-hotspot-4g", "travel-hotspot-5g"};
  private static final String[] COLOURS = {"black", "white", "sand", "teal", "coral", "graphite"};

  private static final String[] SPORTS = {"football", "basketball", "tennis", "cycling", "motorsport", "rugby",
      "golf", "athletics", "winter", "combat", "sailing", "handball", "volleyball", "hockey"};
  private static final String[] KIDS = {"cartoons", "toddlers", "learning", "stories", "science", "adventure"};
  private static final String[] DOCUMENTARIES = {"nature", "history", "science", "true-crime", "travel", "space",
      "oceans", "arts"};
  private static final String[] COOKING = {"baking", "grill", "vegan", "world", "quick", "desserts"};
  private static final String[] MUSIC = {"hifi", "concerts", "karaoke", "radio", "classical", "jazz",
      "lyrics"};
  private static final String[] ESPORTS = {"league-north", "battle-arena", "racing-sim", "tactics",
      "fighting", "retro"};

  // plain words for film, series and album titles (always with a catalogue number: see the class comment)
  private static final String[] TITLE_FIRST = {"quiet", "silver", "last", "hidden", "broken", "northern",
      "burning", "second", "golden", "lost", "paper", "iron", "winter", "salt", "hollow", "distant", "bright",
      "crooked", "wild", "glass", "velvet", "copper", "midnight", "lonely", "restless", "pale", "emerald",
      "forgotten", "scarlet", "long"};
  private static final String[] TITLE_SECOND = {"harbor", "orchard", "signal", "garden", "tide", "lantern",
      "frontier", "summer", "echo", "bridge", "meadow", "circuit", "valley", "island", "compass", "ember",
      "station", "parade", "canyon", "letter", "mirror", "harvest", "tower", "river", "horizon", "kingdom",
      "ledger", "voyage", "citadel", "refrain"};

  private final List<String> items;
  private final List<String> popularityOrder;

  private KestrelCatalog(List<List<String>> families) {
    Set<String> all = new LinkedHashSet<>();
    for (List<String> family : families) {
      for (String item : family) {
        if (!all.add(item)) {
          throw new IllegalStateException("duplicate catalog item " + item);
        }
      }
    }
    items = List.copyOf(all);
    List<String> order = new ArrayList<>(items.size());
    int longest = 0;
    for (List<String> family : families) {
      longest = Math.max(longest, family.size());
    }
    for (int i = 0; i < longest; i++) {
      for (List<String> family : families) {
        if (i < family.size()) {
          order.add(family.get(i));
        }
      }
    }
    popularityOrder = Collections.unmodifiableList(order);
  }

  /** The one Kestrel Connect catalog. */
  static final KestrelCatalog INSTANCE = new KestrelCatalog(families());

  /** Every item id, family by family. */
  List<String> items() {
    return items;
  }

  /** Every item id, most popular first (families interleaved round-robin). */
  List<String> popularityOrder() {
    return popularityOrder;
  }

  static String handset(String model) {
    return "handset-" + model;
  }

  static String handsetCase(String model) {
    return "case-" + model;
  }

  static String screenGuard(String model) {
    return "guard-" + model;
  }

  /** The launch case of {@link #LAUNCH_MODEL}, never sold before the second emerging pair starts. */
  static String launchCase(String model) {
    return "case-" + model + "-launch";
  }

  static String topup(int amount) {
    return "topup-prepaid-" + amount;
  }

  private static List<List<String>> families() {
    List<List<String>> families = new ArrayList<>();
    families.add(boosts());
    families.add(packs());
    families.add(roaming());
    families.add(plans());
    families.add(topups());
    families.add(devices());
    families.add(accessories());
    families.add(protection());
    families.add(cloud());
    families.add(smartHome());
    families.add(calling());
    families.add(films());
    families.add(series());
    families.add(albums());
    return families;
  }

  private static List<String> plans() {
    List<String> plans = new ArrayList<>();
    for (String size : new String[] {"5gb", "10gb", "20gb", "unlimited", "basic", "50gb"}) {
      for (String term : new String[] {"30d", "90d", "365d"}) {
        plans.add("plan-prepaid-" + size + "-" + term);
      }
    }
    plans.add("plan-postpaid-family");
    for (String size : new String[] {"25gb", "unlimited", "10gb", "50gb", "100gb", "unlimited-plus"}) {
      for (String term : new String[] {"24m", "12m", "flex"}) {
        plans.add("plan-postpaid-" + size + "-" + term);
      }
    }
    for (int lines = 2; lines <= 6; lines++) {
      plans.add("plan-postpaid-family-" + lines + "-lines");
    }
    for (String share : new String[] {"20gb", "50gb", "100gb", "unlimited"}) {
      plans.add("plan-family-data-share-" + share);
    }
    for (String tier : new String[] {"solo", "team", "fleet"}) {
      for (String size : new String[] {"10gb", "50gb", "unlimited"}) {
        plans.add("plan-business-" + tier + "-" + size);
      }
    }
    for (String speed : new String[] {"300mbit", "100mbit", "1000mbit", "500mbit", "2500mbit"}) {
      plans.add("plan-home-fibre-" + speed);
    }
    for (String speed : new String[] {"100mbit", "300mbit", "unlimited"}) {
      plans.add("plan-home-5g-" + speed);
    }
    for (String tier : new String[] {"basic", "plus", "max", "sports", "kids"}) {
      plans.add("plan-tv-" + tier);
    }
    plans.add("plan-data-only-tablet");
    plans.add("plan-data-only-watch");
    plans.add("plan-sim-only-starter");
    return plans;
  }

  private static List<String> topups() {
    List<String> topups = new ArrayList<>();
    for (int amount : TOPUP_AMOUNTS) {
      topups.add(topup(amount));
    }
    return topups;
  }

  private static List<String> boosts() {
    List<String> boosts = new ArrayList<>();
    for (String size : new String[] {"1gb", "5gb", "2gb", "10gb", "3gb", "20gb", "50gb", "100gb"}) {
      boosts.add("boost-" + size);
    }
    for (String days : new String[] {"1d", "7d", "3d", "30d"}) {
      boosts.add("boost-unlimited-" + days);
    }
    for (String size : new String[] {"5gb", "10gb", "20gb", "unlimited-1d", "unlimited-7d"}) {
      boosts.add("boost-lowlatency-" + size);
    }
    for (String kind : new String[] {"video", "social", "music", "gaming", "maps", "hotspot", "5g-priority",
        "night", "weekend", "cloud-backup"}) {
      for (String size : new String[] {"5gb", "unlimited-7d", "unlimited-30d"}) {
        boosts.add("boost-" + kind + "-" + size);
      }
    }
    return boosts;
  }

  private static List<String> roaming() {
    List<String> roaming = new ArrayList<>();
    String[] zones = {"a", "b", "c", "d", "e", "f", "g", "h"};
    for (String period : new String[] {"day", "week", "3day", "month"}) {
      for (String zone : zones) {
        roaming.add("roam-zone-" + zone + "-" + period);
      }
    }
    for (String size : new String[] {"1gb", "3gb", "5gb", "10gb", "20gb"}) {
      for (String zone : zones) {
        roaming.add("roam-zone-" + zone + "-data-" + size);
      }
    }
    for (String zone : zones) {
      roaming.add("roam-zone-" + zone + "-calls-60min");
      roaming.add("roam-zone-" + zone + "-calls-300min");
    }
    roaming.add("roam-cruise-day");
    roaming.add("roam-cruise-week");
    roaming.add("roam-flight-pass");
    roaming.add("roam-border-day");
    return roaming;
  }

  private static List<String> packs() {
    List<String> packs = new ArrayList<>();
    String[][] themes = {SPORTS, KIDS, DOCUMENTARIES, COOKING, MUSIC, ESPORTS};
    String[] names = {"sports", "kids", "documentaries", "cooking", "music", "esports"};
    for (String name : names) {
      packs.add("pack-" + name);
    }
    for (int i = 0; i < 14; i++) {
      for (int t = 0; t < themes.length; t++) {
        if (i < themes[t].length) {
          packs.add("pack-" + names[t] + "-" + themes[t][i]);
        }
      }
    }
    for (String name : names) {
      packs.add("pack-" + name + "-yearly");
    }
    for (String name : new String[] {"cinema", "series", "news", "audiobooks", "podcasts", "games", "fitness",
        "languages", "magazines", "anime"}) {
      packs.add("pack-" + name);
      packs.add("pack-" + name + "-yearly");
    }
    return packs;
  }

  private static List<String> devices() {
    List<String> devices = new ArrayList<>();
    for (String model : HANDSET_MODELS) {
      devices.add(handset(model));
    }
    devices.add(handset(LAUNCH_MODEL));
    for (String model : TABLET_MODELS) {
      devices.add("tablet-" + model);
    }
    for (String model : WATCH_MODELS) {
      devices.add("watch-" + model);
    }
    for (String model : EARBUD_MODELS) {
      devices.add("earbuds-" + model);
    }
    for (String model : ROUTER_MODELS) {
      devices.add("router-" + model);
    }
    for (String model : new String[] {"display-8", "display-10", "tv-stick-4k", "tv-box-pro", "console-lite",
        "game-controller", "vr-visor", "e-reader-6", "e-reader-8", "action-cam", "dash-cam", "tracker-tag",
        "tracker-tag-4pack", "kids-tracker"}) {
      devices.add("device-" + model);
    }
    return devices;
  }

  private static List<String> accessories() {
    List<String> accessories = new ArrayList<>();
    for (String model : HANDSET_MODELS) {
      accessories.add(handsetCase(model));
      accessories.add(screenGuard(model));
    }
    accessories.add(launchCase(LAUNCH_MODEL));
    for (String watts : new String[] {"30w", "20w", "65w", "45w", "100w", "18w"}) {
      accessories.add("charger-usb-c-" + watts);
    }
    for (String watts : new String[] {"15w", "10w", "25w"}) {
      accessories.add("charger-wireless-" + watts);
    }
    accessories.add("charger-car-dual");
    accessories.add("charger-travel-kit");
    for (String cable : new String[] {"usb-c-1m", "usb-c-2m", "usb-c-braided-2m", "usb-c-to-a-1m",
        "usb-c-to-micro-usb-1m", "hdmi-2m"}) {
      accessories.add("cable-" + cable);
    }
    for (String bank : new String[] {"10k", "20k", "5k-magnetic", "25k-laptop"}) {
      accessories.add("powerbank-" + bank);
    }
    for (String model : TABLET_MODELS) {
      accessories.add("cover-" + model);
      accessories.add("guard-" + model);
      accessories.add("keyboard-" + model);
    }
    for (String model : WATCH_MODELS) {
      for (String colour : COLOURS) {
        accessories.add("strap-" + model + "-" + colour);
      }
    }
    for (String model : EARBUD_MODELS) {
      accessories.add("tips-" + model);
      accessories.add("sleeve-" + model);
    }
    for (String mount : new String[] {"car-vent", "bike", "desk-stand", "tripod", "selfie-stick", "ring-grip",
        "finger-loop", "lanyard", "wallet-sleeve", "sim-tool"}) {
      accessories.add("mount-" + mount);
    }
    for (String colour : COLOURS) {
      accessories.add("case-universal-" + colour);
      accessories.add("headphones-wired-" + colour);
    }
    for (String card : new String[] {"64gb", "128gb", "256gb", "512gb"}) {
      accessories.add("memory-card-" + card);
    }
    return accessories;
  }

  private static List<String> protection() {
    List<String> protection = new ArrayList<>();
    protection.add("protect-basic");
    protection.add("protect-travel");
    protection.add("protect-plus");
    protection.add("protect-screen");
    protection.add("protect-theft");
    protection.add("protect-family");
    for (String device : new String[] {"handset", "tablet", "watch", "earbuds", "laptop", "console"}) {
      for (String term : new String[] {"12m", "24m", "36m", "monthly"}) {
        protection.add("protect-" + device + "-" + term);
      }
    }
    for (String extra : new String[] {"id-theft", "cyber", "data-recovery", "express-swap", "battery",
        "water"}) {
      protection.add("protect-" + extra);
    }
    return protection;
  }

  private static List<String> cloud() {
    List<String> cloud = new ArrayList<>();
    for (String size : new String[] {"50gb", "200gb", "1tb", "500gb", "2tb", "5tb", "10tb"}) {
      cloud.add("cloud-" + size + "-monthly");
      cloud.add("cloud-" + size + "-yearly");
    }
    for (String kind : new String[] {"family-1tb", "family-2tb", "photos-unlimited", "backup-pc",
        "backup-business", "vault-100gb"}) {
      cloud.add("cloud-" + kind + "-monthly");
      cloud.add("cloud-" + kind + "-yearly");
    }
    return cloud;
  }

  private static List<String> smartHome() {
    List<String> home = new ArrayList<>();
    for (String thing : new String[] {"plug", "camera-indoor", "bulb-white", "doorbell", "sensor-motion",
        "camera-outdoor", "bulb-colour", "sensor-door", "strip-light", "thermostat", "controller", "sensor-water",
        "siren", "lock", "speaker", "smoke-alarm", "blinds", "garage-opener", "pet-feeder", "air-monitor"}) {
      home.add("home-" + thing);
      home.add("home-" + thing + "-3pack");
      home.add("home-" + thing + "-install");
    }
    for (String tier : new String[] {"basic", "plus", "pro"}) {
      home.add("home-security-" + tier + "-monthly");
      home.add("home-security-" + tier + "-yearly");
      home.add("home-energy-" + tier + "-monthly");
    }
    return home;
  }

  private static List<String> calling() {
    List<String> calling = new ArrayList<>();
    for (String minutes : new String[] {"120min", "60min", "300min", "600min", "unlimited"}) {
      for (int zone = 1; zone <= 12; zone++) {
        calling.add("intl-zone-" + zone + "-" + minutes + "-30d");
      }
    }
    for (String minutes : new String[] {"60min", "300min"}) {
      for (int zone = 1; zone <= 12; zone++) {
        calling.add("intl-zone-" + zone + "-" + minutes + "-7d");
      }
    }
    for (int zone = 1; zone <= 12; zone++) {
      calling.add("intl-zone-" + zone + "-sms-100");
      calling.add("intl-zone-" + zone + "-video-calls-30d");
    }
    return calling;
  }

  /**
   * A title slug {@code <first>-<second>-no-<number>}: a word pair is never a title alone, so no random pair of
   * plain words can spell the title of a well-known work.
   */
  static String title(String first, String second, int number) {
    return first + "-" + second + "-no-" + number;
  }

  private static List<String> films() {
    List<String> films = new ArrayList<>();
    for (int i = 0; i < TITLE_FIRST.length; i++) {
      for (int j = 0; j < TITLE_SECOND.length; j++) {
        // a diagonal walk spreads popular titles over many words
        films.add("film-" + title(TITLE_FIRST[(i + j) % TITLE_FIRST.length], TITLE_SECOND[j], i + 1));
      }
    }
    return films;
  }

  private static List<String> albums() {
    List<String> albums = new ArrayList<>();
    for (int i = 0; i < 150; i++) {
      albums.add("album-" + title(TITLE_SECOND[i % TITLE_SECOND.length],
          TITLE_FIRST[(i * 11 + i / TITLE_SECOND.length + 5) % TITLE_FIRST.length], i / TITLE_SECOND.length + 1));
    }
    return albums;
  }

  private static List<String> series() {
    List<String> series = new ArrayList<>();
    for (int season = 1; season <= 4; season++) {
      for (int i = 0; i < 55; i++) {
        series.add("series-" + title(TITLE_FIRST[(i * 7 + i / TITLE_SECOND.length + 3) % TITLE_FIRST.length],
            TITLE_SECOND[i % TITLE_SECOND.length], i / TITLE_SECOND.length + 1) + "-s" + season);
      }
    }
    return series;
  }
}
