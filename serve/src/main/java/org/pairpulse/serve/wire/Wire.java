package org.pairpulse.serve.wire;

import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.DriftEntry;
import org.pairpulse.serve.drift.DriftFinding;
import org.pairpulse.serve.drift.DriftReport;
import org.pairpulse.serve.query.DirectedRules;
import org.pairpulse.serve.query.TopItems;
import org.pairpulse.serve.suggest.Evidence;
import org.pairpulse.serve.suggest.Suggestion;
import org.pairpulse.serve.suggest.SuggestionResult;
import org.pairpulse.serve.trend.TrendHistory;
import org.pairpulse.sketch.stats.Estimate;
import org.pairpulse.sketch.stats.PairMeasures;
import org.pairpulse.sketch.table.PairStats;

/** The JSON shapes of the API and of alert events (ordered maps, written by {@link Json}). */
public final class Wire {
  private Wire() {}

  public static Map<String, Object> estimate(Estimate e) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("value", e.value());
    m.put("lower", e.lower());
    m.put("upper", e.upper());
    return m;
  }

  /** A pair's statistics in one horizon. */
  public static Map<String, Object> pair(PairStats p) {
    PairMeasures m = p.measures();
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("a", p.itemA());
    out.put("b", p.itemB());
    out.put("horizon", p.horizon());
    out.put("baskets", p.counts().baskets());
    out.put("countA", estimate(p.counts().countA()));
    out.put("countB", estimate(p.counts().countB()));
    out.put("countAB", estimate(p.counts().countAB()));
    out.put("support", m.support());
    out.put("confidenceAB", m.confidenceAB());
    out.put("confidenceBA", m.confidenceBA());
    out.put("lift", m.lift());
    out.put("liftLower", m.liftLower());
    out.put("liftUpper", m.liftUpper());
    out.put("shrunkLift", m.shrunkLift());
    out.put("expectedCount", m.expectedCountAB());
    out.put("associationPValue", m.associationPValue());
    out.put("liftUnadjusted", m.liftUnadjusted());
    out.put("liftLowerUnadjusted", m.liftLowerUnadjusted());
    out.put("liftUpperUnadjusted", m.liftUpperUnadjusted());
    out.put("shrunkLiftUnadjusted", m.shrunkLiftUnadjusted());
    out.put("leverage", m.leverage());
    out.put("convictionAB", m.convictionAB());
    out.put("convictionBA", m.convictionBA());
    out.put("kulczynski", m.kulczynski());
    out.put("imbalanceRatio", m.imbalanceRatio());
    out.put("signedRootG2", m.signedRootGSquared());
    out.put("pValue", m.gSquaredPValue());
    out.put("bundle", m.isBundle());
    out.put("repelling", m.isRepelling());
    out.put("trackedSinceMillis", p.trackedSinceMillis());
    return out;
  }

  /** The rule antecedent ⇒ consequent read from a pair. */
  public static Map<String, Object> rule(PairStats p, String antecedent, double measureValue) {
    PairMeasures m = p.measures();
    boolean forward = p.itemA().equals(antecedent);
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("antecedent", antecedent);
    out.put("consequent", p.other(antecedent));
    out.put("horizon", p.horizon());
    out.put("measureValue", measureValue);
    out.put("confidence", forward ? m.confidenceAB() : m.confidenceBA());
    out.put("conviction", forward ? m.convictionAB() : m.convictionBA());
    out.put("support", m.support());
    out.put("lift", m.lift());
    out.put("liftLower", m.liftLower());
    out.put("liftUpper", m.liftUpper());
    out.put("shrunkLift", m.shrunkLift());
    out.put("leverage", m.leverage());
    out.put("signedRootG2", m.signedRootGSquared());
    out.put("pairBaskets", p.counts().countAB().value());
    out.put("bundle", m.isBundle());
    out.put("repelling", m.isRepelling());
    return out;
  }

  /** Rules in the shape of {@link #rule}. */
  public static List<Object> rules(List<DirectedRules.Rule> rules) {
    List<Object> out = new ArrayList<>(rules.size());
    for (DirectedRules.Rule r : rules) {
      out.add(rule(r.pair(), r.antecedent(), r.measureValue()));
    }
    return out;
  }

  /** Pairs in the shape of {@link #pair}. */
  public static List<Object> pairs(List<PairStats> pairs) {
    return pairs.stream().<Object>map(Wire::pair).toList();
  }

  /** Items with their counts and shares. */
  public static List<Object> items(List<TopItems.ItemShare> items) {
    List<Object> out = new ArrayList<>(items.size());
    for (TopItems.ItemShare item : items) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("item", item.item());
      one.put("count", estimate(item.count()));
      one.put("share", item.share());
      out.add(one);
    }
    return out;
  }

  /** A trend series' members, added to {@code out}. */
  public static void putSeries(Map<String, Object> out, TrendHistory.Series series) {
    out.put("horizons", series.horizons());
    out.put("points", series.versions().size());
    out.put("versions", series.versions());
    out.put("watermarkMillis", series.watermarkMillis());
    out.put("publishedAtMillis", series.publishedAtMillis());
    out.put("series", series.values());
  }

  public static Map<String, Object> suggestions(SuggestionResult r, String segment) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", segment);
    out.put("tableVersion", r.tableVersion());
    out.put("horizon", r.horizon());
    out.put("measure", r.measure());
    out.put("basket", r.basket());
    out.put("unknownItems", r.unknownItems());
    List<Object> list = new ArrayList<>();
    for (Suggestion s : r.suggestions()) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("item", s.item());
      one.put("score", s.score());
      List<Object> evidence = new ArrayList<>();
      for (Evidence e : s.evidence()) {
        Map<String, Object> ev = new LinkedHashMap<>();
        ev.put("basketItem", e.basketItem());
        ev.put("horizon", e.horizon());
        ev.put("measure", e.measure());
        ev.put("measureValue", e.measureValue());
        ev.put("contribution", e.contribution());
        ev.put("inBand", e.inBand());
        ev.put("lift", e.lift());
        ev.put("liftLower", e.liftLower());
        ev.put("liftUpper", e.liftUpper());
        ev.put("shrunkLift", e.shrunkLift());
        ev.put("confidence", e.confidence());
        ev.put("support", e.support());
        ev.put("pairBaskets", e.pairBaskets());
        evidence.add(ev);
      }
      one.put("evidence", evidence);
      list.add(one);
    }
    out.put("suggestions", list);
    return out;
  }

  public static Map<String, Object> finding(DriftFinding f) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("a", f.pair().first());
    out.put("b", f.pair().second());
    out.put("signedRootG2", f.signedRootG2());
    out.put("pValue", f.pValue());
    out.put("rateRootG2", f.rateRootG2());
    out.put("associationRootG2", f.associationRootG2());
    out.put("rateRatio", f.rateRatio());
    out.put("oddsRatioRatio", f.oddsRatioRatio());
    out.put("associationUnchanged", f.associationUnchanged());
    out.put("recentLift", f.recentLift());
    out.put("baselineLift", f.baselineLift());
    out.put("liftRatio", f.liftRatio());
    out.put("recentPairBaskets", f.recentPairBaskets());
    out.put("baselinePairBaskets", f.baselinePairBaskets());
    out.put("recentBaskets", f.recentBaskets());
    out.put("referenceBaskets", f.referenceBaskets());
    out.put("recentMinConfidence", f.recentMinConfidence());
    out.put("referenceMinConfidence", f.referenceMinConfidence());
    out.put("recentBundle", f.recentBundle());
    out.put("baselineBundle", f.baselineBundle());
    out.put("trackedSinceMillis", f.trackedSinceMillis());
    out.put("recentHalfLifeMillis", f.recentHalfLifeMillis());
    return out;
  }

  public static Map<String, Object> driftEntry(DriftEntry e) {
    Map<String, Object> out = finding(e.finding());
    out.put("kind", e.kind().wireName());
    out.put("state", e.state().wireName());
    out.put("sinceMillis", e.sinceMillis());
    out.put("raisedAtMillis", e.raisedAtMillis());
    out.put("change", e.change() == null ? null : e.change().wireName());
    out.put("summary", e.summary());
    return out;
  }

  public static Map<String, Object> drift(DriftReport r, int count) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("segment", r.segment());
    out.put("tableVersion", r.tableVersion());
    out.put("atMillis", r.atMillis());
    out.put("pairsCompared", r.pairsCompared());
    out.put("emerging", r.emerging().stream().limit(count).map(Wire::driftEntry).toList());
    out.put("fading", r.fading().stream().limit(count).map(Wire::driftEntry).toList());
    out.put("bundles", r.bundles().stream().limit(count).map(Wire::driftEntry).toList());
    return out;
  }

  /** An alert event's data (the {@code data} member of its CloudEvent). */
  public static Map<String, Object> alert(AlertEvent e) {
    Map<String, Object> out = new LinkedHashMap<>();
    out.put("id", e.id());
    out.put("kind", e.kind().wireName());
    out.put("transition", e.transition().wireName());
    out.put("segment", e.segment());
    out.put("a", e.pair().first());
    out.put("b", e.pair().second());
    out.put("atMillis", e.atMillis());
    out.put("at", Instant.ofEpochMilli(e.atMillis()).toString());
    out.put("sinceMillis", e.sinceMillis());
    out.put("tableVersion", e.tableVersion());
    out.put("change", e.change() == null ? null : e.change().wireName());
    out.put("summary", e.summary());
    out.put("evidence", e.evidence() == null ? null : finding(e.evidence()));
    return out;
  }
}
