package org.pairpulse.serve.internal;

import io.javalin.Javalin;
import io.javalin.http.staticfiles.Location;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import org.pairpulse.serve.ServeConfig;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.query.StatusReport;
import org.pairpulse.serve.suggest.Suggester;

/**
 * The HTTP server: Jetty settings, the guards before every route ({@link HttpGuards}), the one error mapper
 * ({@link ErrorMapper}), the API's routes (grouped in {@link StatusRoutes}, {@link TableRoutes},
 * {@link HistoryRoutes}), the OpenAPI document, {@code /metrics} and the dashboard's files. Every route reads the
 * segment's newest floored table through a volatile reference: no locks, nothing shared with ingest.
 */
final class ApiServer implements AutoCloseable {
  static final String API = "/api/v1";

  /** Everything the routes read. */
  record Deps(ServeConfig config, Segments segments, CohortFloor floor, DriftSettings drift, Suggester suggester,
      ServeMeters meters, PrometheusMeterRegistry registry, AlertHistory alerts, StatusRoutes.Sources status) {}

  private final Deps c;
  private final List<String> routes = new ArrayList<>();
  private final byte[] openApi = Assets.openApi();
  private final Map<String, byte[]> assets = Assets.dashboardLibraries();
  private final HttpGuards guards;
  private final ErrorMapper errors;
  private final RequestBinder binder;
  private final ResponseCache cache;
  private Javalin app;

  ApiServer(Deps deps) {
    this.c = deps;
    this.guards = new HttpGuards(c.config().token(), c.config().string(ServeConfig.CORS_ORIGINS));
    this.errors = new ErrorMapper(c.meters());
    this.binder = new RequestBinder(c.config(), c.segments(), c.floor());
    this.cache = new ResponseCache(c.config().intValue(ServeConfig.CACHE_ENTRIES), c.meters());
  }

  /** Starts listening; returns the bound port. */
  int start(String host, int port) {
    StatusReport.Serving serving = new StatusReport.Serving(c.floor(), binder.defaultHorizon(),
        binder.maxBasketItems(), binder.maxCount(), guards.tokenRequired(), c.drift());
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
      config.http.defaultContentType = Replies.JSON;
      config.staticFiles.add(files -> {
        files.hostedPath = "/";
        files.directory = "/pairpulse/dashboard";
        files.location = Location.CLASSPATH;
        files.headers = Map.of("Cache-Control", "no-cache");
      });
      config.routes.before(guards::before);
      errors.install(config);
      Routes api = new Routes(config, routes);
      new StatusRoutes(binder, c.segments(), serving, c.status()).register(api);
      new TableRoutes(binder, cache, c.suggester(), c.meters()).register(api);
      new HistoryRoutes(binder, c.drift(), c.alerts()).register(api);
      api.get(API + "/openapi.json", ctx -> ctx.contentType(Replies.JSON).result(openApi));
      api.get("/metrics", ctx -> ctx.contentType("text/plain; version=0.0.4; charset=utf-8")
          .result(c.registry().scrape()));
      for (Map.Entry<String, byte[]> asset : assets.entrySet()) {
        String type = Assets.contentType(asset.getKey());
        byte[] bytes = asset.getValue();
        config.routes.get(asset.getKey(), ctx -> ctx.header("Cache-Control", "max-age=86400").contentType(type)
            .result(bytes));
      }
    });
    app.start();
    return app.port();
  }

  /** The API's routes as "METHOD path". */
  List<String> routes() {
    return Collections.unmodifiableList(routes);
  }

  @Override
  public void close() {
    if (app != null) {
      app.stop();
    }
  }
}
