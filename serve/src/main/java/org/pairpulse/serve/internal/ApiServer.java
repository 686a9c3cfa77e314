package org.pairpulse.serve.internal;

import com.github.benmanes.caffeine.cache.Cache;
import com.github.benmanes.caffeine.cache.Caffeine;
import io.javalin.Javalin;
import io.javalin.http.Context;
import io.javalin.http.Handler;
import io.javalin.http.HttpResponseException;
import io.javalin.http.staticfiles.Location;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.PriorityQueue;
import java.util.Properties;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import java.util.function.Supplier;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.IngestStatus;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.floor.PairKey;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.suggest.SuggestionRanking;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.Measure;
import org.pairpulse.sketch.table.PairStats;
import org.pairpulse.sketch.time.EventClock;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The HTTP server: routes, input checks, errors, the response cache, the bearer token, static
 * files. Every route reads the segment's newest {@link FlooredTable} through a volatile reference:
 * no locks, nothing shared with ingest.
 */
public final class ApiServer implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger(ApiServer.class);
  static final String API = "/api/v1";
  private static final String JSON = "application/json";
  private static final String DASHBOARD_CSP = "default-src 'self'; script-src 'self'; style-src 'self'; "
      + "img-src 'self' data:; connect-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'";

  /** Everything the routes read. */
  public record Deps(ServeConfig config, Map<String, SegmentState> segments, CohortFloor floor,
      DriftSettings drift, Suggester suggester, ServeMeters meters, PrometheusMeterRegistry registry,
      IngestStatus ingest, Supplier<SketchHealth> sketch, EvaluationStatus evaluation, AlertHistory alerts,
      EventClock wallClock, GroupStatus group) {}

  private record CacheKey(String route, String segment, long version, Object request) {}

  private final Deps c;
  private final Cache<CacheKey, byte[]> cache;
  private final List<String> routes = new ArrayList<>();
  private final byte[] openApi;
  private final Map<String, byte[]> assets = new LinkedHashMap<>();
  private final byte[] token;
  private final Set<String> corsOrigins;
  private final int maxIdLength;
  private final int maxCount;
  private Javalin app;

  public ApiServer(Deps context) {
    this.c = context;
    int entries = c.config().intValue(ServeConfig.CACHE_ENTRIES);
    this.cache = entries == 0 ? null : Caffeine.newBuilder().maximumSize(entries).build();
    this.openApi = resource("pairpulse/api/openapi.json");
    String uplot = "META-INF/resources/webjars/uplot/" + webjarVersion("uplot") + "/dist/";
    assets.put("/assets/uplot.js", resource(uplot + "uPlot.iife.min.js"));
    assets.put("/assets/uplot.css", resource(uplot + "uPlot.min.css"));
    this.token = c.config().token().map(t -> t.getBytes(StandardCharsets.UTF_8)).orElse(null);
    this.corsOrigins = new LinkedHashSet<>();
    for (String origin : c.config().string(ServeConfig.CORS_ORIGINS).split(",")) {
      if (!origin.isBlank()) {
        corsOrigins.add(origin.trim());
      }
    }
    this.maxIdLength = c.config().intValue(ServeConfig.MAX_ID_LENGTH);
    this.maxCount = c.config().intValue(ServeConfig.MAX_COUNT);
  }

  private static byte[] resource(String path) {
    try (InputStream in = ApiServer.class.getClassLoader().getResourceAsStream(path)) {
      if (in == null) {
        throw new IllegalStateException("missing resource " + path);
      }
      return in.readAllBytes();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** The version of an npm WebJar on the class path (so the dashboard's asset paths carry no version). */
  static String webjarVersion(String name) {
    Properties props = new Properties();
    try (InputStream in = ApiServer.class.getClassLoader()
        .getResourceAsStream("META-INF/maven/org.webjars.npm/" + name + "/pom.properties")) {
      if (in == null) {
        throw new IllegalStateException("WebJar " + name + " is not on the class path");
      }
      props.load(in);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    return props.getProperty("version");
  }

  /** Starts listening; returns the bound port. */
  public int start(String host, int port) {
    app = Javalin.create(config -> {
      config.startup.showJavalinBanner = false;
      config.startup.showOldJavalinVersionWarning = false;
      config.jetty.host = host;
      config.jetty.port = port;
      config.jetty.modifyServer(server -> server.setErrorHandler(new JsonErrorHandler()));
      config.jetty.modifyHttpConfiguration(http -> {
        http.setSendServerVersion(false);
        http.setSendXPoweredBy(false);
      });
      config.http.maxRequestSize = c.config().intValue(ServeConfig.MAX_BODY_BYTES);
      config.http.prefer405over404 = true;
      config.http.defaultContentType = JSON;
      config.staticFiles.add(files -> {
        files.hostedPath = "/";
        files.directory = "/pairpulse/dashboard";
        files.location = Location.CLASSPATH;
        files.headers = Map.of("Cache-Control", "no-cache");
      });
      config.routes.before(this::before);
      config.routes.exception(ApiException.class, (e, ctx) -> error(ctx, e.status(), e.getMessage()));
      config.routes.exception(HttpResponseException.class, (e, ctx) -> error(ctx, e.getStatus(), reason(e)));
      config.routes.exception(Exception.class, (e, ctx) -> {
        LOG.error("request {} {} failed", ctx.method(), ctx.path(), e);
        error(ctx, 500, "internal error");
      });
      get(config, API + "/health", this::health);
      get(config, API + "/health/ready", this::ready);
      get(config, API + "/status", this::status);
      get(config, API + "/suggestions", ctx -> suggestions(ctx, false));
      post(config, API + "/suggestions", ctx -> suggestions(ctx, true));
      get(config, API + "/rules", this::rules);
      get(config, API + "/pairs/top", this::topPairs);
      get(config, API + "/pairs/repelling", this::repelling);
      get(config, API + "/items", this::items);
      get(config, API + "/drift", this::drift);
      get(config, API + "/alerts", this::alerts);
      get(config, API + "/trend/pair", this::pairTrend);
      get(config, API + "/trend/item", this::itemTrend);
      get(config, API + "/openapi.json", ctx -> ctx.contentType(JSON).result(openApi));
      get(config, "/metrics", ctx -> ctx.contentType("text/plain; version=0.0.4; charset=utf-8")
          .result(c.registry().scrape()));
      for (Map.Entry<String, byte[]> asset : assets.entrySet()) {
        String type = asset.getKey().endsWith(".js") ? "text/javascript; charset=utf-8" : "text/css; charset=utf-8";
        byte[] bytes = asset.getValue();
        config.routes.get(asset.getKey(), ctx -> ctx.header("Cache-Control", "max-age=86400").contentType(type)
            .result(bytes));
      }
    });
    app.start();
    return app.port();
  }

  private void get(io.javalin.config.JavalinConfig config, String path, Handler handler) {
    routes.add("GET " + path);
    config.routes.get(path, handler);
  }

  private void post(io.javalin.config.JavalinConfig config, String path, Handler handler) {
    routes.add("POST " + path);
    config.routes.post(path, handler);
  }

  /** The API's routes as "METHOD path" (the OpenAPI test checks each is documented). */
  public List<String> routes() {
    return Collections.unmodifiableList(routes);
  }

  @Override
  public void close() {
    if (app != null) {
      app.stop();
    }
  }

  // ------------------------------------------------------------------ cross-cutting

  private void before(Context ctx) {
    String path = ctx.path();
    ctx.header("X-Content-Type-Options", "nosniff");
    ctx.header("Referrer-Policy", "no-referrer");
    if (path.startsWith("/api/") || path.equals("/metrics")) {
      ctx.header("Cache-Control", "no-store");
    } else {
      ctx.header("Content-Security-Policy", DASHBOARD_CSP);
      ctx.header("X-Frame-Options", "DENY");
    }
    if (cors(ctx)) {
      return; // a CORS preflight, answered (browsers send no credentials with it)
    }
    if (token != null && guarded(path)) {
      String header = ctx.header("Authorization");
      byte[] given = header != null && header.regionMatches(true, 0, "Bearer ", 0, 7)
          ? header.substring(7).trim().getBytes(StandardCharsets.UTF_8) : new byte[0];
      if (!MessageDigest.isEqual(given, token)) { // constant time in the token's length
        ctx.header("WWW-Authenticate", "Bearer realm=\"pairpulse\"");
        throw new ApiException(401, header == null ? "missing bearer token" : "invalid bearer token");
      }
    }
  }

  /** Everything but health and the dashboard's static files (which hold no data) needs the token. */
  static boolean guarded(String path) {
    return (path.startsWith("/api/") && !path.equals(API + "/health") && !path.equals(API + "/health/ready"))
        || path.equals("/metrics");
  }

  /** Adds CORS headers for an allowed origin; true when this was a preflight, now answered. */
  private boolean cors(Context ctx) {
    String origin = ctx.header("Origin");
    if (origin == null || corsOrigins.isEmpty() || !corsOrigins.contains(origin)) {
      return false; // CORS off: no Access-Control headers, browsers refuse cross-origin reads
    }
    ctx.header("Access-Control-Allow-Origin", origin);
    ctx.header("Vary", "Origin");
    if ("OPTIONS".equals(ctx.method().name())) {
      ctx.header("Access-Control-Allow-Methods", "GET, POST");
      ctx.header("Access-Control-Allow-Headers", "Authorization, Content-Type");
      ctx.header("Access-Control-Max-Age", "600");
      ctx.status(204);
      ctx.skipRemainingHandlers();
      return true;
    }
    return false;
  }

  private void error(Context ctx, int status, String reason) {
    c.meters().error(status);
    Map<String, Object> body = new LinkedHashMap<>();
    body.put("error", reason);
    body.put("status", status);
    ctx.status(status).contentType(JSON).result(Json.bytes(body));
  }

  private static String reason(HttpResponseException e) {
    String message = e.getMessage();
    if (e.getStatus() == 404) {
      return "no such endpoint";
    }
    if (e.getStatus() == 405) {
      return "method not allowed";
    }
    if (e.getStatus() == 413) {
      return "request body too large";
    }
    return message == null || message.isBlank() ? "error" : Params.shorten(message).toLowerCase(java.util.Locale.ROOT);
  }

  private static void json(Context ctx, byte[] body) {
    ctx.status(200).contentType(JSON).result(body);
  }

  private static void json(Context ctx, Object body) {
    json(ctx, Json.bytes(body));
  }

  private byte[] cached(CacheKey key, Supplier<Object> compute) {
    if (cache == null) {
      c.meters().cacheMiss();
      return Json.bytes(compute.get());
    }
    byte[] hit = cache.getIfPresent(key);
    if (hit != null) {
      c.meters().cacheHit();
      return hit;
    }
    c.meters().cacheMiss();
    byte[] body = Json.bytes(compute.get());
    cache.put(key, body);
    return body;
  }

  // ------------------------------------------------------------------ shared parameter checks

  private SegmentState segment(Params p) {
    String name = p.one("segment").orElse("all");
    checkId("segment", name);
    SegmentState segment = c.segments().get(name);
    if (segment == null) {
      throw ApiException.notFound("unknown segment '" + name + "'; known: " + String.join(", ", c.segments().keySet()));
    }
    return segment;
  }

  private String horizon(Params p, FlooredTable view) {
    String name = p.one("horizon").orElse(c.config().string(ServeConfig.DEFAULT_HORIZON));
    Set<String> known = new LinkedHashSet<>(view.horizonNames());
    if (known.isEmpty()) {
      c.floor().horizons().forEach(h -> known.add(h.name()));
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

  // ------------------------------------------------------------------ routes

  private void health(Context ctx) {
    Params.query(ctx, Set.of(), Set.of());
    json(ctx, Map.of("status", "up"));
  }

  private void ready(Context ctx) {
    Params.query(ctx, Set.of(), Set.of());
    long version = c.segments().get("all").view().version();
    if (version == 0) {
      throw new ApiException(503, "no pair table published yet");
    }
    Map<String, Object> body = new LinkedHashMap<>();
    body.put("status", "ready");
    body.put("tableVersion", version);
    json(ctx, body);
  }

  private void status(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    long now = c.wallClock().millis();
    Map<String, Object> body = new LinkedHashMap<>();
    body.put("ready", view.version() > 0);
    body.put("segment", segment.name());
    body.put("segments", List.copyOf(c.segments().keySet()));
    Map<String, Object> table = new LinkedHashMap<>();
    table.put("version", view.version());
    table.put("publishedAtMillis", view.version() == 0 ? null : view.table().publishedAtMillis());
    table.put("ageMillis", view.version() == 0 ? null : now - view.table().publishedAtMillis());
    table.put("watermarkMillis", view.version() == 0 ? null : view.table().watermarkMillis());
    table.put("sortMeasure", view.table().sortMeasure().wireName());
    List<Object> horizons = new ArrayList<>();
    for (String h : view.horizonNames()) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("name", h);
      Optional<HorizonSpec> spec = c.floor().spec(h);
      one.put("kind", spec.map(s -> s.kind().name().toLowerCase(java.util.Locale.ROOT)).orElse(null));
      one.put("description", spec.map(HorizonSpec::describe).orElse(null));
      one.put("baskets", view.baskets(h));
      one.put("publishedPairs", view.pairs(h).size());
      horizons.add(one);
    }
    table.put("horizons", horizons);
    table.put("publishedPairs", view.publishedPairs());
    table.put("suppressedPairs", view.suppressedPairs());
    body.put("table", table);
    body.put("ingest", ingest(c.ingest().health()));
    body.put("sketch", sketch(c.sketch().get()));
    body.put("evaluation", c.evaluation().summary().orElse(null));
    body.put("group", c.group().coverage().map(g -> group(g, c.group().alertLeader())).orElse(null));
    Map<String, Object> serving = new LinkedHashMap<>();
    serving.put("cohortFloor", c.floor().minBaskets());
    serving.put("evidenceHorizon", view.evidenceHorizon().orElse(null));
    serving.put("defaultHorizon", c.config().string(ServeConfig.DEFAULT_HORIZON));
    serving.put("measures", Arrays.stream(Measure.values()).map(Measure::wireName).toList());
    serving.put("defaultMeasure", Measure.SHRUNK_LIFT.wireName());
    serving.put("confidenceBand", List.of(SuggestionRequest.DEFAULT_MIN_CONFIDENCE, SuggestionRequest.DEFAULT_MAX_CONFIDENCE));
    serving.put("maxBasketItems", c.config().intValue(ServeConfig.MAX_BASKET_ITEMS));
    serving.put("maxCount", maxCount);
    serving.put("tokenRequired", token != null);
    body.put("serving", serving);
    Map<String, Object> drift = new LinkedHashMap<>();
    drift.put("recentHorizon", c.drift().recentHorizon());
    drift.put("referenceHorizon", c.drift().referenceHorizon());
    drift.put("enterRootG2", c.drift().enterRootG2());
    drift.put("exitRootG2", c.drift().exitRootG2());
    drift.put("enterRatio", c.drift().enterRatio());
    drift.put("exitRatio", c.drift().exitRatio());
    drift.put("minDwellMillis", c.drift().minDwellMillis());
    drift.put("cooldownMillis", c.drift().cooldownMillis());
    body.put("drift", drift);
    body.put("alertsRecorded", c.alerts().size());
    body.put("nowMillis", now);
    json(ctx, body);
  }

  private static Map<String, Object> group(GroupStatus.Coverage g, boolean alertLeader) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("partitions", g.partitions());
    out.put("merged", g.merged());
    out.put("live", g.live());
    out.put("remote", g.remote());
    out.put("empty", g.empty());
    out.put("missing", g.missing());
    out.put("stale", g.stale());
    out.put("partial", g.partial());
    out.put("oldestContributionAgeMillis", g.oldestContributionAgeMillis());
    out.put("alertLeader", alertLeader);
    return out;
  }

  private static Map<String, Object> ingest(IngestHealth h) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("state", h.state().wireName());
    out.put("basketsTotal", h.basketsTotal());
    out.put("basketsPerSecond", h.basketsPerSecond());
    out.put("recordsPerSecond", h.recordsPerSecond());
    out.put("lagRecords", h.lagRecords() < 0 ? null : h.lagRecords());
    out.put("deadLettersByReason", h.deadLettersByReason());
    out.put("deadLettersTotal", h.deadLettersTotal());
    out.put("watermarkMillis", h.watermarkMillis() == Long.MIN_VALUE ? null : h.watermarkMillis());
    out.put("detail", h.detail());
    return out;
  }

  private static Map<String, Object> sketch(SketchHealth s) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("trackedPairs", s.trackedPairs());
    out.put("trackedPairCapacity", s.trackedPairCapacity());
    out.put("pairFill", s.pairFill());
    out.put("trackedItems", s.trackedItems());
    out.put("trackedItemCapacity", s.trackedItemCapacity());
    out.put("itemFill", s.itemFill());
    out.put("stateBytes", s.stateBytes());
    List<Object> horizons = new ArrayList<>();
    for (SketchHealth.HorizonHealth h : s.horizons()) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("name", h.name());
      one.put("baskets", h.baskets());
      one.put("pairErrorBound", h.pairErrorBound());
      one.put("itemErrorBound", h.itemErrorBound());
      horizons.add(one);
    }
    out.put("horizons", horizons);
    return out;
  }

  private static final Set<String> SUGGEST_PARAMS = Set.of("items", "segment", "horizon", "measure", "count",
      "minConfidence", "maxConfidence", "minSupport", "includeBundles", "ranking");

  private void suggestions(Context ctx, boolean post) {
    long start = System.nanoTime();
    Params p;
    if (post) {
      String type = ctx.contentType();
      if (type == null || !type.toLowerCase(java.util.Locale.ROOT).startsWith(JSON)) {
        throw new ApiException(415, "the body must be application/json");
      }
      int limit = c.config().intValue(ServeConfig.MAX_BODY_BYTES);
      if (ctx.contentLength() > limit) {
        throw new ApiException(413, "request body too large (limit " + limit + " bytes)");
      }
      p = Params.json(ctx.bodyAsBytes(), SUGGEST_PARAMS, Set.of("items"));
    } else {
      p = Params.query(ctx, SUGGEST_PARAMS, Set.of("items"));
    }
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    List<String> items = new ArrayList<>();
    for (String value : p.all("items")) {
      if (post) {
        items.add(value);
      } else {
        items.addAll(Arrays.asList(value.split(",", -1)));
      }
    }
    if (items.isEmpty()) {
      throw ApiException.badRequest("missing parameter 'items' (one or more item ids)");
    }
    int maxItems = c.config().intValue(ServeConfig.MAX_BASKET_ITEMS);
    if (items.size() > maxItems) {
      throw ApiException.badRequest("too many items: " + items.size() + " (limit " + maxItems + ")");
    }
    for (String item : items) {
      checkId("item id", item);
    }
    double minConfidence = p.fraction("minConfidence", SuggestionRequest.DEFAULT_MIN_CONFIDENCE);
    double maxConfidence = p.fraction("maxConfidence", SuggestionRequest.DEFAULT_MAX_CONFIDENCE);
    if (minConfidence > maxConfidence) {
      throw ApiException.badRequest("minConfidence (" + minConfidence + ") is above maxConfidence (" + maxConfidence + ")");
    }
    SuggestionRequest request;
    try {
      request = new SuggestionRequest(items, horizon(p, view), measure(p, Measure.SHRUNK_LIFT),
          count(p, SuggestionRequest.DEFAULT_COUNT), minConfidence, maxConfidence, p.fraction("minSupport", 0.0),
          p.bool("includeBundles", false), SuggestionRanking.fromWireName(
              p.one("ranking").orElse(SuggestionRequest.DEFAULT_RANKING.wireName())));
    } catch (IllegalArgumentException e) { // an unknown ranking, or posterior with a measure that is not a lift
      throw ApiException.badRequest(Params.shorten(e.getMessage()));
    }
    byte[] body = cached(new CacheKey("suggestions", segment.name(), view.version(), request),
        () -> Wire.suggestions(c.suggester().suggest(view, request), segment.name()));
    json(ctx, body);
    c.meters().suggestionLatency().record(System.nanoTime() - start, TimeUnit.NANOSECONDS);
  }

  private void rules(Context ctx) {
    Params p = Params.query(ctx, Set.of("item", "segment", "horizon", "measure", "count"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String item = checkId("item", p.required("item"));
    String horizon = horizon(p, view);
    Measure measure = measure(p, Measure.CONFIDENCE);
    int count = count(p, 20);
    byte[] body = cached(new CacheKey("rules", segment.name(), view.version(), List.of(item, horizon, measure, count)),
        () -> {
          List<PairStats> neighbours = view.neighbours(item, horizon);
          Map<String, Object> out = new LinkedHashMap<>();
          out.put("segment", segment.name());
          out.put("tableVersion", view.version());
          out.put("item", item);
          out.put("horizon", horizon);
          out.put("measure", measure.wireName());
          out.put("itemCount", view.itemCount(item, horizon).map(Wire::estimate).orElse(null));
          out.put("outgoing", directed(neighbours, measure, count, item, true));
          out.put("incoming", directed(neighbours, measure, count, item, false));
          return out;
        });
    json(ctx, body);
  }

  /** Rules item ⇒ x (outgoing) or x ⇒ item (incoming), best first by the measure read in that direction. */
  private static List<Object> directed(List<PairStats> pairs, Measure measure, int count, String item,
      boolean outgoing) {
    record Scored(PairStats pair, String antecedent, double value) {}
    List<Scored> scored = new ArrayList<>(pairs.size());
    for (PairStats pair : pairs) {
      String antecedent = outgoing ? item : pair.other(item);
      double value = Suggester.directed(measure, pair.measures(), pair.itemA().equals(antecedent));
      scored.add(new Scored(pair, antecedent, value));
    }
    scored.sort(Comparator.comparingDouble((Scored s) -> Double.isNaN(s.value()) ? Double.POSITIVE_INFINITY : -s.value())
        .thenComparing(s -> s.pair().other(item)));
    List<Object> out = new ArrayList<>();
    for (Scored s : scored.subList(0, Math.min(count, scored.size()))) {
      out.add(Wire.rule(s.pair(), s.antecedent(), s.value()));
    }
    return out;
  }

  private void topPairs(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "measure", "count", "includeBundles"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    Measure measure = measure(p, view.table().sortMeasure());
    int count = count(p, 20);
    boolean bundles = p.bool("includeBundles", true);
    byte[] body = cached(new CacheKey("top", segment.name(), view.version(), List.of(horizon, measure, count, bundles)),
        () -> {
          List<PairStats> all = view.pairs(horizon);
          List<PairStats> best;
          if (measure == view.table().sortMeasure() && bundles) {
            best = all.subList(0, Math.min(count, all.size()));
          } else {
            best = top(all, count, measure, bundles);
          }
          Map<String, Object> out = new LinkedHashMap<>();
          out.put("segment", segment.name());
          out.put("tableVersion", view.version());
          out.put("horizon", horizon);
          out.put("measure", measure.wireName());
          out.put("pairs", best.stream().map(Wire::pair).toList());
          return out;
        });
    json(ctx, body);
  }

  private static final Comparator<PairStats> BY_IDS =
      Comparator.comparing(PairStats::itemA).thenComparing(PairStats::itemB);

  /** The {@code count} best pairs by {@code measure} (NaN last), with a bounded heap. */
  private static List<PairStats> top(List<PairStats> pairs, int count, Measure measure, boolean bundles) {
    Comparator<PairStats> worstFirst = Comparator.comparingDouble((PairStats s) -> key(measure, s))
        .thenComparing(BY_IDS.reversed());
    PriorityQueue<PairStats> heap = new PriorityQueue<>(count + 1, worstFirst);
    for (PairStats pair : pairs) {
      if (!bundles && pair.measures().isBundle()) {
        continue;
      }
      heap.add(pair);
      if (heap.size() > count) {
        heap.poll();
      }
    }
    List<PairStats> out = new ArrayList<>(heap);
    out.sort(worstFirst.reversed());
    return out;
  }

  private static double key(Measure measure, PairStats pair) {
    double value = measure.of(pair.measures());
    return Double.isNaN(value) ? Double.NEGATIVE_INFINITY : value;
  }

  private void repelling(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "count"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    int count = count(p, 20);
    byte[] body = cached(new CacheKey("repelling", segment.name(), view.version(), List.of(horizon, count)), () -> {
      Comparator<PairStats> mostRepelling = Comparator.comparingDouble((PairStats s) -> s.measures().liftUpper())
          .thenComparingDouble(s -> s.measures().signedRootGSquared()).thenComparing(BY_IDS);
      PriorityQueue<PairStats> heap = new PriorityQueue<>(count + 1, mostRepelling.reversed());
      for (PairStats pair : view.pairs(horizon)) {
        if (pair.measures().isRepelling()) {
          heap.add(pair);
          if (heap.size() > count) {
            heap.poll();
          }
        }
      }
      List<PairStats> list = new ArrayList<>(heap);
      list.sort(mostRepelling);
      Map<String, Object> out = new LinkedHashMap<>();
      out.put("segment", segment.name());
      out.put("tableVersion", view.version());
      out.put("horizon", horizon);
      out.put("pairs", list.stream().map(Wire::pair).toList());
      return out;
    });
    json(ctx, body);
  }

  private void items(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "horizon", "count", "prefix"), Set.of());
    SegmentState segment = segment(p);
    FlooredTable view = segment.view();
    String horizon = horizon(p, view);
    int count = count(p, 20);
    String prefix = p.one("prefix").orElse("");
    if (prefix.length() > maxIdLength) {
      throw ApiException.badRequest("prefix longer than " + maxIdLength + " characters");
    }
    byte[] body = cached(new CacheKey("items", segment.name(), view.version(), List.of(horizon, count, prefix)), () -> {
      double baskets = view.baskets(horizon);
      List<Map.Entry<String, Estimate>> list = view.items(horizon).entrySet().stream()
          .filter(e -> e.getKey().startsWith(prefix))
          .sorted(Comparator.comparingDouble((Map.Entry<String, Estimate> e) -> -e.getValue().value())
              .thenComparing(Map.Entry::getKey))
          .limit(count).toList();
      List<Object> items = new ArrayList<>();
      for (Map.Entry<String, Estimate> e : list) {
        Map<String, Object> one = new LinkedHashMap<>();
        one.put("item", e.getKey());
        one.put("count", Wire.estimate(e.getValue()));
        one.put("share", e.getValue().value() / baskets);
        items.add(one);
      }
      Map<String, Object> out = new LinkedHashMap<>();
      out.put("segment", segment.name());
      out.put("tableVersion", view.version());
      out.put("horizon", horizon);
      out.put("baskets", baskets);
      out.put("items", items);
      return out;
    });
    json(ctx, body);
  }

  private void drift(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "count"), Set.of());
    SegmentState segment = segment(p);
    Map<String, Object> out = Wire.drift(segment.drift().report(), count(p, 20));
    out.put("recentHorizon", c.drift().recentHorizon());
    out.put("referenceHorizon", c.drift().referenceHorizon());
    json(ctx, out);
  }

  private void alerts(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "count"), Set.of());
    String segment = null;
    if (p.has("segment")) {
      segment = segment(p).name();
    }
    int count = count(p, 50);
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment);
    out.put("alerts", c.alerts().newest(segment, count).stream().map(Wire::alert).toList());
    json(ctx, out);
  }

  private void pairTrend(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "a", "b"), Set.of());
    SegmentState segment = segment(p);
    String a = checkId("a", p.required("a"));
    String b = checkId("b", p.required("b"));
    if (a.equals(b)) {
      throw ApiException.badRequest("a and b must be different items");
    }
    PairKey key = PairKey.of(a, b);
    segment.trend().pin(key);
    TrendHistory.Series series = segment.trend().pairSeries(key);
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment.name());
    out.put("a", key.first());
    out.put("b", key.second());
    out.put("published", segment.view().pair(a, b, segment.view().horizonNames().isEmpty() ? ""
        : segment.view().horizonNames().get(0)).isPresent());
    put(out, series);
    json(ctx, out);
  }

  private void itemTrend(Context ctx) {
    Params p = Params.query(ctx, Set.of("segment", "item"), Set.of());
    SegmentState segment = segment(p);
    String item = checkId("item", p.required("item"));
    segment.trend().pin(item);
    TrendHistory.Series series = segment.trend().itemSeries(item);
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment.name());
    out.put("item", item);
    put(out, series);
    json(ctx, out);
  }

  private static void put(Map<String, Object> out, TrendHistory.Series series) {
    out.put("horizons", series.horizons());
    out.put("points", series.versions().size());
    out.put("versions", series.versions());
    out.put("watermarkMillis", series.watermarkMillis());
    out.put("publishedAtMillis", series.publishedAtMillis());
    out.put("series", series.values());
  }
}
