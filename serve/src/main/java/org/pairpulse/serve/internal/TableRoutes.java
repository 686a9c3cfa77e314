package org.pairpulse.serve.internal;

import io.javalin.http.Context;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.function.Supplier;
import org.pairpulse.serve.floor.FlooredTable;
import org.pairpulse.serve.metrics.ServeMeters;
import org.pairpulse.serve.query.DirectedRules;
import org.pairpulse.serve.query.RepellingPairs;
import org.pairpulse.serve.query.TopItems;
import org.pairpulse.serve.query.TopPairs;
import org.pairpulse.serve.suggest.Suggester;
import org.pairpulse.serve.suggest.SuggestionRequest;
import org.pairpulse.serve.wire.Wire;
import org.pairpulse.sketch.table.PairStats;

/**
 * The routes that answer from a segment's table: suggestions, rules, top pairs, repelling pairs, items. Each binds
 * its request, runs its query (cached per table version) and writes the JSON.
 */
final class TableRoutes {
  private final RequestBinder bind;
  private final ResponseCache cache;
  private final Suggester suggester;
  private final ServeMeters meters;

  TableRoutes(RequestBinder bind, ResponseCache cache, Suggester suggester, ServeMeters meters) {
    this.bind = bind;
    this.cache = cache;
    this.suggester = suggester;
    this.meters = meters;
  }

  void register(Routes routes) {
    routes.get(ApiServer.API + "/suggestions", ctx -> suggestions(ctx, false));
    routes.post(ApiServer.API + "/suggestions", ctx -> suggestions(ctx, true));
    routes.get(ApiServer.API + "/rules", this::rules);
    routes.get(ApiServer.API + "/pairs/top", this::topPairs);
    routes.get(ApiServer.API + "/pairs/repelling", this::repelling);
    routes.get(ApiServer.API + "/items", this::items);
  }

  private static ResponseCache.Key key(String route, RequestBinder.OnView<?> r) {
    return new ResponseCache.Key(route, r.segment().name(), r.view().version(), r.query());
  }

  /** The members every table answer starts with. */
  private static Map<String, Object> head(RequestBinder.OnView<?> r) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", r.segment().name());
    out.put("tableVersion", r.view().version());
    return out;
  }

  private void suggestions(Context ctx, boolean post) {
    long start = System.nanoTime();
    RequestBinder.OnView<SuggestionRequest> r = bind.suggestions(ctx, post);
    Replies.json(ctx, cache.get(key("suggestions", r),
        () -> Wire.suggestions(suggester.suggest(r.view(), r.query()), r.segment().name())));
    meters.suggestionLatency().record(System.nanoTime() - start, TimeUnit.NANOSECONDS);
  }

  private void rules(Context ctx) {
    RequestBinder.OnView<DirectedRules.Query> r = bind.rules(ctx);
    DirectedRules.Query q = r.query();
    Replies.json(ctx, cache.get(key("rules", r), () -> {
      FlooredTable view = r.view();
      List<PairStats> neighbours = view.neighbours(q.item(), q.horizon());
      Map<String, Object> out = head(r);
      out.put("item", q.item());
      out.put("horizon", q.horizon());
      out.put("measure", q.measure().wireName());
      out.put("itemCount", view.itemCount(q.item(), q.horizon()).map(Wire::estimate).orElse(null));
      out.put("outgoing", Wire.rules(DirectedRules.outgoing(neighbours, q.item(), q.measure(), q.count())));
      out.put("incoming", Wire.rules(DirectedRules.incoming(neighbours, q.item(), q.measure(), q.count())));
      return out;
    }));
  }

  private void topPairs(Context ctx) {
    RequestBinder.OnView<TopPairs.Query> r = bind.topPairs(ctx);
    TopPairs.Query q = r.query();
    pairList(ctx, "top", r, q.horizon(), q.measure().wireName(), () -> TopPairs.of(r.view(), q));
  }

  private void repelling(Context ctx) {
    RequestBinder.OnView<RepellingPairs.Query> r = bind.repelling(ctx);
    RepellingPairs.Query q = r.query();
    pairList(ctx, "repelling", r, q.horizon(), null, () -> RepellingPairs.of(r.view().pairs(q.horizon()), q.count()));
  }

  /** A reply holding one horizon's list of pairs ({@code measure} left out when null), cached by {@code kind}. */
  private void pairList(Context ctx, String kind, RequestBinder.OnView<?> r, String horizon, String measure,
      Supplier<List<PairStats>> pairs) {
    Replies.json(ctx, cache.get(key(kind, r), () -> {
      Map<String, Object> out = head(r);
      out.put("horizon", horizon);
      if (measure != null) {
        out.put("measure", measure);
      }
      out.put("pairs", Wire.pairs(pairs.get()));
      return out;
    }));
  }

  private void items(Context ctx) {
    RequestBinder.OnView<TopItems.Query> r = bind.items(ctx);
    TopItems.Query q = r.query();
    Replies.json(ctx, cache.get(key("items", r), () -> {
      double baskets = r.view().baskets(q.horizon());
      Map<String, Object> out = head(r);
      out.put("horizon", q.horizon());
      out.put("baskets", baskets);
      out.put("items", Wire.items(TopItems.of(r.view().items(q.horizon()), baskets, q.prefix(), q.count())));
      return out;
    }));
  }
}
