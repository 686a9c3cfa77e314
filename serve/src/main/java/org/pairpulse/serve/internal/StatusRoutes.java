package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.function.Supplier;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestStatus;
import org.pairpulse.serve.ServeServer;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.query.StatusReport;
import org.pairpulse.sketch.time.EventClock;

/** Health (no token), readiness and the status document. */
final class StatusRoutes {
  /** Where the status document's changing parts come from. */
  record Sources(IngestStatus ingest, Supplier<SketchHealth> sketch, EvaluationStatus evaluation, GroupStatus group,
      AlertHistory alerts, EventClock wallClock) {}

  private final RequestBinder bind;
  private final Segments segments;
  private final StatusReport.Serving serving;
  private final Sources sources;

  StatusRoutes(RequestBinder bind, Segments segments, StatusReport.Serving serving, Sources sources) {
    this.bind = bind;
    this.segments = segments;
    this.serving = serving;
    this.sources = sources;
  }

  void register(Routes routes) {
    routes.get(ApiServer.API + "/health", this::health);
    routes.get(ApiServer.API + "/health/ready", this::ready);
    routes.get(ApiServer.API + "/status", this::status);
  }

  private void health(Context ctx) {
    bind.none(ctx);
    Replies.json(ctx, Map.of("status", "up"));
  }

  private void ready(Context ctx) {
    bind.none(ctx);
    long version = segments.get(ServeServer.ALL).view().version();
    if (version == 0) {
      throw new ApiException(503, "no pair table published yet");
    }
    Map<String, Object> body = new LinkedHashMap<>();
    body.put("status", "ready");
    body.put("tableVersion", version);
    Replies.json(ctx, body);
  }

  private void status(Context ctx) {
    SegmentState segment = bind.status(ctx);
    StatusReport.Health health = new StatusReport.Health(sources.ingest().health(), sources.sketch().get(),
        sources.evaluation().summary(), sources.group(), sources.alerts().size(), sources.wallClock().millis());
    Replies.json(ctx, StatusReport.of(segment.name(), segment.view(), segments.names(), serving, health));
  }
}
