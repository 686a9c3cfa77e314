package org.pairpulse.serve.query;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import org.pairpulse.serve.EvaluationStatus;
import org.pairpulse.serve.GroupStatus;
import org.pairpulse.serve.IngestHealth;
import org.pairpulse.serve.SketchHealth;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.CohortFloor;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.stats.Measure;

/**
 * The status document ({@code GET /api/v1/status}, the dashboard's header): the served table of one segment, the
 * health of ingest and the sketch, the evaluation, the group, the serving limits and the drift settings, as ordered
 * maps in the API's JSON shape (the OpenAPI document's {@code Status}). An unpublished table (version 0) has no
 * times; a negative lag or an unset watermark is {@code null}.
 */
public final class StatusReport {
  private StatusReport() {}

  /** What the server serves with: fixed for its lifetime. */
  public record Serving(CohortFloor floor, String defaultHorizon, int maxBasketItems, int maxCount,
      boolean tokenRequired, DriftSettings drift) {}

  /** What changes between calls: the health suppliers' newest answers and the clock. */
  public record Health(IngestHealth ingest, SketchHealth sketch, Optional<EvaluationStatus.Summary> evaluation,
      GroupStatus group, int alertsRecorded, long nowMillis) {}

  /** The status of {@code segment}, whose newest view is {@code view}, among {@code segments}. */
  public static Map<String, Object> of(String segment, FlooredTable view, List<String> segments, Serving serving,
      Health health) {
    Map<String, Object> body = new LinkedHashMap<>();
    body.put("ready", view.version() > 0);
    body.put("segment", segment);
    body.put("segments", List.copyOf(segments));
    body.put("table", table(view, serving.floor(), health.nowMillis()));
    body.put("ingest", ingest(health.ingest()));
    body.put("sketch", sketch(health.sketch()));
    body.put("evaluation", health.evaluation().orElse(null));
    GroupStatus group = health.group();
    body.put("group", group.coverage().map(g -> group(g, group.alertLeader())).orElse(null));
    body.put("serving", serving(view, serving));
    body.put("drift", drift(serving.drift()));
    body.put("alertsRecorded", health.alertsRecorded());
    body.put("nowMillis", health.nowMillis());
    return body;
  }

  static Map<String, Object> table(FlooredTable view, CohortFloor floor, long nowMillis) {
    boolean published = view.version() > 0;
    Map<String, Object> table = new LinkedHashMap<>();
    table.put("version", view.version());
    table.put("publishedAtMillis", published ? view.table().publishedAtMillis() : null);
    table.put("ageMillis", published ? nowMillis - view.table().publishedAtMillis() : null);
    table.put("watermarkMillis", published ? view.table().watermarkMillis() : null);
    table.put("sortMeasure", view.table().sortMeasure().wireName());
    List<Object> horizons = new ArrayList<>();
    for (String h : view.horizonNames()) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("name", h);
      Optional<HorizonSpec> spec = floor.spec(h);
      one.put("kind", spec.map(s -> s.kind().name().toLowerCase(Locale.ROOT)).orElse(null));
      one.put("description", spec.map(HorizonSpec::describe).orElse(null));
      one.put("baskets", view.baskets(h));
      one.put("publishedPairs", view.pairs(h).size());
      horizons.add(one);
    }
    table.put("horizons", horizons);
    table.put("publishedPairs", view.publishedPairs());
    table.put("suppressedPairs", view.suppressedPairs());
    return table;
  }

  private static Map<String, Object> serving(FlooredTable view, Serving s) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("cohortFloor", s.floor().minBaskets());
    out.put("evidenceHorizon", view.evidenceHorizon().orElse(null));
    out.put("defaultHorizon", s.defaultHorizon());
    out.put("measures", Arrays.stream(Measure.values()).map(Measure::wireName).toList());
    out.put("defaultMeasure", Measure.SHRUNK_LIFT.wireName());
    out.put("confidenceBand", List.of(SuggestionRequest.DEFAULT_MIN_CONFIDENCE, SuggestionRequest.DEFAULT_MAX_CONFIDENCE));
    out.put("maxBasketItems", s.maxBasketItems());
    out.put("maxCount", s.maxCount());
    out.put("tokenRequired", s.tokenRequired());
    return out;
  }

  private static Map<String, Object> drift(DriftSettings d) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("recentHorizon", d.recentHorizon());
    out.put("referenceHorizon", d.referenceHorizon());
    out.put("enterRootG2", d.enterRootG2());
    out.put("exitRootG2", d.exitRootG2());
    out.put("enterRatio", d.enterRatio());
    out.put("exitRatio", d.exitRatio());
    out.put("minDwellMillis", d.minDwellMillis());
    out.put("cooldownMillis", d.cooldownMillis());
    return out;
  }

  static Map<String, Object> group(GroupStatus.Coverage g, boolean alertLeader) {
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

  static Map<String, Object> ingest(IngestHealth h) {
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

  static Map<String, Object> sketch(SketchHealth s) {
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
}
