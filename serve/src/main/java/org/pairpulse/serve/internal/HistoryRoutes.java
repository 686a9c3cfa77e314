package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import java.util.LinkedHashMap;
import java.util.Map;
import org.pairpulse.serve.alerts.AlertHistory;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.serve.wire.Wire;

/** The routes that answer from what the refresh loop kept: drift, alerts, pair and item trends. */
record HistoryRoutes(RequestBinder bind, DriftSettings drift, AlertHistory alerts) {
  void register(Routes routes) {
    routes.get(ApiServer.API + "/drift", this::drift);
    routes.get(ApiServer.API + "/alerts", this::alerts);
    routes.get(ApiServer.API + "/trend/pair", this::pairTrend);
    routes.get(ApiServer.API + "/trend/item", this::itemTrend);
  }

  private void drift(Context ctx) {
    RequestBinder.Listing r = bind.drift(ctx);
    Map<String, Object> out = Wire.drift(r.segment().drift().report(), r.count());
    out.put("recentHorizon", drift.recentHorizon());
    out.put("referenceHorizon", drift.referenceHorizon());
    Replies.json(ctx, out);
  }

  private void alerts(Context ctx) {
    RequestBinder.Listing r = bind.alerts(ctx);
    String segment = r.segment() == null ? null : r.segment().name();
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment);
    out.put("alerts", alerts.newest(segment, r.count()).stream().map(Wire::alert).toList());
    Replies.json(ctx, out);
  }

  private void pairTrend(Context ctx) {
    RequestBinder.PairTrend r = bind.pairTrend(ctx);
    SegmentState segment = r.segment();
    segment.trend().pin(r.pair());
    FlooredTable view = segment.view();
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment.name());
    out.put("a", r.pair().first());
    out.put("b", r.pair().second());
    out.put("published", view.pair(r.pair().first(), r.pair().second(),
        view.horizonNames().isEmpty() ? "" : view.horizonNames().get(0)).isPresent());
    Wire.putSeries(out, segment.trend().pairSeries(r.pair()));
    Replies.json(ctx, out);
  }

  private void itemTrend(Context ctx) {
    RequestBinder.ItemTrend r = bind.itemTrend(ctx);
    SegmentState segment = r.segment();
    segment.trend().pin(r.item());
    TrendHistory.Series series = segment.trend().itemSeries(r.item());
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment.name());
    out.put("item", r.item());
    Wire.putSeries(out, series);
    Replies.json(ctx, out);
  }
}
