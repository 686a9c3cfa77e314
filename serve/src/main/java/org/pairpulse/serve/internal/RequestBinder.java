package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Optional;
import java.util.Set;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.query.DirectedRules;
import org.pairpulse.serve.query.RepellingPairs;
import org.pairpulse.serve.query.TopItems;
import org.pairpulse.serve.query.TopPairs;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.sketch.stats.Measure;

/**
 * The one place where requests are bound and checked: per endpoint, its parameters (read by {@link Params}, which
 * refuses unknown and repeated names and badly typed values) become a request record, or an {@link ApiException}
 * with the status and reason the API documents. The checks run in a fixed order per endpoint (segment first), so
 * a request with several faults always gets the same answer. The segment's view is read once here: the horizon is
 * checked against, and the answer computed from, the same table version.
 */
final class RequestBinder {
  /** A request on one segment's newest view. */
  record OnView<Q>(SegmentState segment, FlooredTable view, Q query) {}

  /** A pair's trend: {@code a} and {@code b} different. */
  record PairTrend(SegmentState segment, PairKey pair) {}

  /** An item's trend. */
  record ItemTrend(SegmentState segment, String item) {}

  /** Drift or alerts: {@code segment} null for alerts of every segment. */
  record Listing(SegmentState segment, int count) {}

  private static final Set<String> SUGGEST_PARAMS = Set.of("items", "segment", "horizon", "measure", "count",
      "minConfidence", "maxConfidence", "minSupport", "includeBundles", "ranking");

  private final Segments segments;
  private final CohortFloor floor;
  private final String defaultHorizon;
  private final int maxIdLength;
  private final int maxCount;
  private final int maxBasketItems;
  private final int maxBodyBytes;

  RequestBinder(ServeConfig config, Segments segments, CohortFloor floor) {
    this.segments = segments;
    this.floor = floor;
    this.defaultHorizon = config.string(ServeConfig.DEFAULT_HORIZON);
    this.maxIdLength = config.intValue(ServeConfig.MAX_ID_LENGTH);
    this.maxCount = config.intValue(ServeConfig.MAX_COUNT);
    this.maxBasketItems = config.intValue(ServeConfig.MAX_BASKET_ITEMS);
    this.maxBodyBytes = config.intValue(ServeConfig.MAX_BODY_BYTES);
  }

  int maxCount() {
    return maxCount;
  }

  int maxBasketItems() {
    return maxBasketItems;
  }

  String defaultHorizon() {
    return defaultHorizon;
  }

  // ------------------------------------------------------------------ endpoints

  /** An endpoint without parameters (health). */
  void none(Context ctx) {
    Params.query(ctx, Set.of(), Set.of());
  }

  SegmentState status(Context ctx) {
    return segment(Params.query(ctx, Set.of("segment"), Set.of()));
  }

  /** {@code GET} (items comma-separated, may repeat) or {@code POST} (a JSON object, items an array). */
  OnView<SuggestionRequest> suggestions(Context ctx, boolean post) {
    Params p;
    if (post) {
      String type = ctx.contentType();
      if (type == null || !type.toLowerCase(Locale.ROOT).startsWith(Replies.JSON)) {
        throw new ApiException(415, "the body must be application/json");
      }
      if (ctx.contentLength() > maxBodyBytes) {
        throw new ApiException(413, "request body too large (limit " + maxBodyBytes + " bytes)");
      }
      p = Params.json(ctx.bodyAsBytes(), SUGGEST_PARAMS, Set.of("items"));
    } else {
      p = Params.query(ctx, SUGGEST_PARAMS, Set.of("items"));
    }
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    List<String> items = new ArrayList<>();
    for (String value : p.all("items")) {
      items.addAll(post ? List.of(value) : Arrays.asList(value.split(",", -1)));
    }
    if (items.isEmpty()) {
      throw ApiException.badRequest("missing parameter 'items' (one or more item ids)");
    }
    if (items.size() > maxBasketItems) {
      throw ApiException.badRequest("too many items: " + items.size() + " (limit " + maxBasketItems + ")");
    }
    for (String item : items) {
      checkId("item id", item);
    }
    double minConfidence = p.fraction("minConfidence", SuggestionRequest.DEFAULT_MIN_CONFIDENCE);
    double maxConfidence = p.fraction("maxConfidence", SuggestionRequest.DEFAULT_MAX_CONFIDENCE);
    if (minConfidence > maxConfidence) {
      throw ApiException.badRequest("minConfidence (" + minConfidence + ") is above maxConfidence (" + maxConfidence + ")");
    }
    try {
      return new OnView<>(segment, view, new SuggestionRequest(items, horizon(p, view),
          measure(p, Measure.SHRUNK_LIFT), count(p, SuggestionRequest.DEFAULT_COUNT), minConfidence, maxConfidence,
          p.fraction("minSupport", 0.0), p.bool("includeBundles", false), SuggestionRanking.fromWireName(
              p.one("ranking").orElse(SuggestionRequest.DEFAULT_RANKING.wireName()))));
    } catch (IllegalArgumentException e) { // an unknown ranking, or posterior with a measure that is not a lift
      throw ApiException.badRequest(Params.shorten(e.getMessage()));
    }
  }

  OnView<DirectedRules.Query> rules(Context ctx) {
    Params p = Params.query(ctx, Set.of("item", "segment", "horizon", "measure", "count"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String item = checkId("item", p.required("item"));
    String horizon = horizon(p, view);
    Measure measure = measure(p, Measure.CONFIDENCE);
    return new OnView<>(segment, view, new DirectedRules.Query(item, horizon, measure, count(p, 20)));
  }

  OnView<TopPairs.Query> topPairs(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "measure", "count", "includeBundles"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    Measure measure = measure(p, view.table().sortMeasure());
    int count = count(p, 20);
    return new OnView<>(segment, view, new TopPairs.Query(horizon, measure, count, p.bool("includeBundles", true)));
  }

  OnView<RepellingPairs.Query> repelling(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "count"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    return new OnView<>(segment, view, new RepellingPairs.Query(horizon, count(p, 20)));
  }

  OnView<TopItems.Query> items(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "count", "prefix"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    int count = count(p, 20);
    String prefix = p.one("prefix").orElse("");
    if (prefix.length() > maxIdLength) {
      throw ApiException.badRequest("prefix longer than " + maxIdLength + " characters");
    }
    return new OnView<>(segment, view, new TopItems.Query(horizon, count, prefix));
  }

  Listing drift(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "count"), Set.of());
    SegmentState segment = segment(p);
    return new Listing(segment, count(p, 20));
  }

  Listing alerts(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "count"), Set.of());
    SegmentState segment = p.has("segment") ? segment(p) : null;
    return new Listing(segment, count(p, 50));
  }

  PairTrend pairTrend(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "a", "b"), Set.of());
    SegmentState segment = segment(p);
    String a = checkId("a", p.required("a"));
    String b = checkId("b", p.required("b"));
    if (a.equals(b)) {
      throw ApiException.badRequest("a and b must be different items");
    }
    return new PairTrend(segment, PairKey.of(a, b));
  }

  ItemTrend itemTrend(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "item"), Set.of());
    SegmentState segment = segment(p);
    return new ItemTrend(segment, checkId("item", p.required("item")));
  }

  // ------------------------------------------------------------------ parameters shared by endpoints

  private SegmentState segment(Params p) {
    String name = p.one("segment").orElse("all");
    checkId("segment", name);
    SegmentState segment = segments.get(name);
    if (segment == null) {
      throw ApiException.notFound("unknown segment '" + name + "'; known: " + String.join(", ", segments.names()));
    }
    return segment;
  }

  private String horizon(Params p, FlooredTable view) {
    String name = p.one("horizon").orElse(defaultHorizon);
    Set<String> known = new LinkedHashSet<>(view.horizonNames());
    if (known.isEmpty()) {
      floor.horizons().forEach(h -> known.add(h.name()));
    }
    if (!known.contains(name)) {
      throw ApiException.badRequest("unknown horizon '" + Params.shorten(name) + "'; known: " + String.join(", ", known));
    }
    return name;
  }

  private static Measure measure(Params p, Measure defaultValue) {
    Optional<String> name = p.one("measure");
    if (name.isEmpty()) {
      return defaultValue;
    }
    try {
      return Measure.fromWireName(name.get());
    } catch (IllegalArgumentException e) {
      throw ApiException.badRequest(Params.shorten(e.getMessage().replace(name.get(), Params.shorten(name.get()))));
    }
  }

  private int count(Params p, int defaultValue) {
    return p.integer("count", Math.min(defaultValue, maxCount), 1, maxCount);
  }

  private String checkId(String what, String id) {
    if (id.isEmpty()) {
      throw ApiException.badRequest(what + " must not be empty");
    }
    if (id.length() > maxIdLength) {
      throw ApiException.badRequest(what + " longer than " + maxIdLength + " characters");
    }
    for (int i = 0; i < id.length(); i++) {
      if (Character.isISOControl(id.charAt(i))) {
        throw ApiException.badRequest(what + " contains a control character");
      }
    }
    return id;
  }
}
