package org.pairpulse.ops.analysis.backtest;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonGenerator;
import com.fasterxml.jackson.core.util.DefaultIndenter;
import com.fasterxml.jackson.core.util.DefaultPrettyPrinter;
import java.io.IOException;
import java.io.Writer;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ops.product.evaluation.EvaluationMethod;
import org.pairpulse.ops.product.evaluation.EvaluationSettings;
import org.pairpulse.ops.product.evaluation.Evaluator;
import org.pairpulse.ops.product.evaluation.Tally;
import org.pairpulse.serve.drift.AlertEvent;
import org.pairpulse.serve.drift.DriftFinding;
import org.pairpulse.serve.drift.DriftSettings;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.engine.EngineStats;
import org.pairpulse.sketch.horizon.HorizonSpec;

/**
 * Writes a backtest's result as one JSON document ({@value #FORMAT}). Deterministic: no wall-clock time, no
 * absolute paths; numbers as Java prints them; NaN and infinities as {@code null}; maps in a fixed order.
 * The fields are described in {@code ops/README-ops-analysis.md}.
 */
public final class BacktestJson {
  public static final String FORMAT = "pairpulse-backtest/1";

  private BacktestJson() {}

  /**
   * @param inputName the input file's name (no directory)
   * @param input what the file gave
   * @param detection the score against a ground truth, or null
   */
  public static void write(Writer out, String inputName, FileSource.Result input, BacktestResult result,
      Detection detection) throws IOException {
    DefaultPrettyPrinter pretty = new DefaultPrettyPrinter()
        .withObjectIndenter(new DefaultIndenter("  ", "\n"))
        .withArrayIndenter(new DefaultIndenter("  ", "\n"));
    try (JsonGenerator json = new JsonFactory().disable(JsonGenerator.Feature.AUTO_CLOSE_TARGET).createGenerator(out)) {
      json.setPrettyPrinter(pretty);
      json.writeStartObject();
      json.writeStringField("format", FORMAT);
      writeInput(json, inputName, input);
      writeSettings(json, result.settings());
      writeReplay(json, result);
      json.writeArrayFieldStart("alerts");
      for (AlertEvent alert : result.alerts()) {
        writeAlert(json, alert, detection);
      }
      json.writeEndArray();
      json.writeArrayFieldStart("summaries");
      for (TableSummary summary : result.summaries()) {
        writeSummary(json, summary);
      }
      json.writeEndArray();
      if (result.evaluation() != null) {
        writeEvaluation(json, result.evaluation(), detection);
      }
      if (detection != null) {
        writeDetection(json, detection);
      }
      json.writeEndObject();
      json.flush();
    }
    out.write('\n');
    out.flush();
  }

  private static void writeInput(JsonGenerator json, String name, FileSource.Result input) throws IOException {
    json.writeObjectFieldStart("input");
    json.writeStringField("file", name);
    json.writeNumberField("lines", input.lines());
    json.writeNumberField("baskets", input.baskets());
    json.writeNumberField("duplicates", input.duplicates());
    json.writeObjectFieldStart("deadLetters");
    for (DeadLetterReason reason : DeadLetterReason.values()) {
      Long count = input.deadLetters().get(reason);
      if (count != null) {
        json.writeNumberField(reason.wireName(), count);
      }
    }
    json.writeEndObject();
    json.writeEndObject();
  }

  private static void writeSettings(JsonGenerator json, BacktestSettings settings) throws IOException {
    json.writeObjectFieldStart("settings");
    json.writeNumberField("refreshEveryMillis", settings.refreshEveryMillis());
    json.writeNumberField("summaryEveryMillis", settings.summaryEveryMillis());
    json.writeNumberField("summaryTop", settings.summaryTop());
    number(json, "cohortFloor", settings.cohortFloor());
    EngineConfig engine = settings.engine();
    json.writeObjectFieldStart("engine");
    json.writeArrayFieldStart("horizons");
    for (HorizonSpec horizon : engine.horizons()) {
      json.writeStartObject();
      json.writeStringField("name", horizon.name());
      json.writeStringField("kind", horizon.kind().name().toLowerCase(java.util.Locale.ROOT));
      if (horizon.isWindow()) {
        json.writeNumberField("lengthMillis", horizon.lengthMillis());
        json.writeNumberField("panes", horizon.paneCount());
      } else {
        json.writeNumberField("halfLifeMillis", horizon.halfLifeMillis());
      }
      json.writeEndObject();
    }
    json.writeEndArray();
    json.writeNumberField("trackedPairCapacity", engine.trackedPairCapacity());
    json.writeNumberField("trackedItemCapacity", engine.trackedItemCapacity());
    number(json, "pairEpsilon", engine.pairEpsilon());
    number(json, "pairDelta", engine.pairDelta());
    number(json, "itemEpsilon", engine.itemEpsilon());
    number(json, "itemDelta", engine.itemDelta());
    number(json, "decayPairEpsilon", engine.decayPairEpsilon());
    json.writeNumberField("maxPairsPerBasket", engine.maxPairsPerBasket());
    json.writeNumberField("trackingHalfLifeMillis", engine.trackingHalfLifeMillis());
    json.writeEndObject();
    DriftSettings drift = settings.drift();
    json.writeObjectFieldStart("drift");
    json.writeStringField("recentHorizon", drift.recentHorizon());
    json.writeStringField("referenceHorizon", drift.referenceHorizon());
    number(json, "enterRootG2", drift.enterRootG2());
    number(json, "exitRootG2", drift.exitRootG2());
    number(json, "enterRatio", drift.enterRatio());
    number(json, "exitRatio", drift.exitRatio());
    number(json, "bundleExitConfidence", drift.bundleExitConfidence());
    json.writeNumberField("minDwellMillis", drift.minDwellMillis());
    json.writeNumberField("cooldownMillis", drift.cooldownMillis());
    json.writeArrayFieldStart("shortHalfLivesMillis");
    for (long halfLife : drift.shortHalfLivesMillis()) {
      json.writeNumber(halfLife);
    }
    json.writeEndArray();
    json.writeEndObject();
    EvaluationSettings evaluation = settings.evaluation();
    if (evaluation != null) {
      json.writeObjectFieldStart("evaluation");
      number(json, "share", evaluation.share());
      json.writeNumberField("seed", evaluation.seed());
      json.writeNumberField("k", evaluation.k());
      json.writeStringField("horizon", evaluation.horizon());
      json.writeStringField("measure", evaluation.measure().wireName());
      number(json, "minConfidence", evaluation.minConfidence());
      number(json, "maxConfidence", evaluation.maxConfidence());
      json.writeBooleanField("includeBundles", evaluation.includeBundles());
      json.writeStringField("ranking", evaluation.ranking().wireName());
      json.writeEndObject();
    }
    json.writeEndObject();
  }

  private static void writeReplay(JsonGenerator json, BacktestResult result) throws IOException {
    EngineStats stats = result.engineStats();
    json.writeObjectFieldStart("replay");
    json.writeNumberField("baskets", result.baskets());
    time(json, "firstEvent", result.firstEventMillis());
    time(json, "lastEvent", result.lastEventMillis());
    number(json, "simulatedDays", result.simulatedDays());
    json.writeNumberField("refreshes", result.refreshes());
    json.writeNumberField("nightlyRebuilds", result.nightlyRebuilds());
    json.writeNumberField("trackedPairs", stats.trackedPairs());
    json.writeNumberField("trackedItems", stats.trackedItems());
    json.writeNumberField("pairAdmissions", stats.pairAdmissions());
    json.writeNumberField("pairEvictions", stats.pairEvictions());
    json.writeNumberField("cappedBaskets", stats.cappedBaskets());
    json.writeNumberField("stateBytes", result.stateBytes());
    long raised = result.alerts().stream()
        .filter(a -> a.transition() == org.pairpulse.serve.drift.AlertTransition.RAISED).count();
    json.writeNumberField("alertsRaised", raised);
    json.writeNumberField("alertsResolved", result.alerts().size() - raised);
    json.writeEndObject();
  }

  private static void writeAlert(JsonGenerator json, AlertEvent alert, Detection detection) throws IOException {
    json.writeStartObject();
    json.writeStringField("id", alert.id());
    json.writeStringField("kind", alert.kind().wireName());
    json.writeStringField("transition", alert.transition().wireName());
    json.writeArrayFieldStart("pair");
    json.writeString(alert.pair().first());
    json.writeString(alert.pair().second());
    json.writeEndArray();
    time(json, "at", alert.atMillis());
    time(json, "since", alert.sinceMillis());
    json.writeNumberField("tableVersion", alert.tableVersion());
    if (detection != null) {
      for (Detection.ClassifiedAlert classified : detection.alerts()) {
        if (classified.alert() == alert) {
          json.writeStringField("class", classified.alertClass().wireName());
          json.writeStringField("planted", classified.planted() == null ? null : classified.planted().name());
        }
      }
    }
    DriftFinding finding = alert.evidence();
    if (finding == null) {
      json.writeNullField("evidence");
    } else {
      json.writeObjectFieldStart("evidence");
      json.writeStringField("change", alert.change() == null ? null : alert.change().wireName());
      json.writeStringField("summary", alert.summary());
      number(json, "signedRootG2", finding.signedRootG2());
      number(json, "pValue", finding.pValue());
      number(json, "rateRootG2", finding.rateRootG2());
      number(json, "associationRootG2", finding.associationRootG2());
      number(json, "rateRatio", finding.rateRatio());
      number(json, "oddsRatioRatio", finding.oddsRatioRatio());
      number(json, "recentLift", finding.recentLift());
      number(json, "baselineLift", finding.baselineLift());
      number(json, "liftRatio", finding.liftRatio());
      number(json, "recentPairBaskets", finding.recentPairBaskets());
      number(json, "baselinePairBaskets", finding.baselinePairBaskets());
      number(json, "recentBaskets", finding.recentBaskets());
      number(json, "referenceBaskets", finding.referenceBaskets());
      number(json, "recentMinConfidence", finding.recentMinConfidence());
      json.writeBooleanField("recentBundle", finding.recentBundle());
      json.writeBooleanField("baselineBundle", finding.baselineBundle());
      time(json, "trackedSince", finding.trackedSinceMillis());
      json.writeNumberField("recentHalfLifeMillis", finding.recentHalfLifeMillis());
      json.writeEndObject();
    }
    json.writeEndObject();
  }

  private static void writeSummary(JsonGenerator json, TableSummary summary) throws IOException {
    json.writeStartObject();
    time(json, "at", summary.atMillis());
    json.writeNumberField("tableVersion", summary.version());
    json.writeNumberField("trackedPairs", summary.trackedPairs());
    json.writeNumberField("publishedPairs", summary.publishedPairs());
    json.writeNumberField("suppressedPairs", summary.suppressedPairs());
    json.writeObjectFieldStart("baskets");
    for (Map.Entry<String, Double> entry : summary.baskets().entrySet()) {
      number(json, entry.getKey(), entry.getValue());
    }
    json.writeEndObject();
    json.writeObjectFieldStart("top");
    for (Map.Entry<String, List<TableSummary.PairSummary>> entry : summary.top().entrySet()) {
      json.writeArrayFieldStart(entry.getKey());
      for (TableSummary.PairSummary pair : entry.getValue()) {
        json.writeStartObject();
        json.writeArrayFieldStart("pair");
        json.writeString(pair.itemA());
        json.writeString(pair.itemB());
        json.writeEndArray();
        number(json, "pairBaskets", pair.pairBaskets());
        number(json, "support", pair.support());
        number(json, "confidenceAB", pair.confidenceAB());
        number(json, "confidenceBA", pair.confidenceBA());
        number(json, "lift", pair.lift());
        number(json, "liftLower", pair.liftLower());
        number(json, "liftUpper", pair.liftUpper());
        number(json, "shrunkLift", pair.shrunkLift());
        json.writeBooleanField("bundle", pair.bundle());
        json.writeBooleanField("repelling", pair.repelling());
        json.writeEndObject();
      }
      json.writeEndArray();
    }
    json.writeEndObject();
    json.writeEndObject();
  }

  private static void writeEvaluation(JsonGenerator json, Evaluator evaluator, Detection detection) throws IOException {
    json.writeObjectFieldStart("evaluation");
    json.writeNumberField("trials", evaluator.trials());
    json.writeFieldName("overall");
    writeTallies(json, evaluator, Long.MIN_VALUE, Long.MAX_VALUE, false);
    if (detection != null && detection.firstChangeMillis().isPresent()) {
      long from = detection.firstChangeMillis().getAsLong();
      json.writeObjectFieldStart("afterFirstChange");
      time(json, "from", from);
      json.writeFieldName("methods");
      writeTallies(json, evaluator, from, Long.MAX_VALUE, false);
      if (evaluator.hasFocus()) {
        json.writeFieldName("plantedPairTrials");
        writeTallies(json, evaluator, from, Long.MAX_VALUE, true);
      }
      json.writeEndObject();
    }
    if (detection != null && !detection.events().isEmpty()) {
      List<long[]> windows = BacktestRun.daysAfterChanges(detection);
      json.writeObjectFieldStart("daysAfterChanges");
      json.writeArrayFieldStart("windows");
      for (long[] w : windows) {
        json.writeStartObject();
        time(json, "from", w[0]);
        time(json, "to", w[1]);
        json.writeEndObject();
      }
      json.writeEndArray();
      json.writeFieldName("methods");
      writeTallies(json, evaluator, t -> BacktestRun.inWindows(windows, t), false);
      if (evaluator.hasFocus()) {
        json.writeFieldName("plantedPairTrials");
        writeTallies(json, evaluator, t -> BacktestRun.inWindows(windows, t), true);
      }
      json.writeEndObject();
    }
    json.writeArrayFieldStart("days");
    for (long day : evaluator.days()) {
      json.writeStartObject();
      json.writeStringField("day", Instant.ofEpochMilli(day).toString().substring(0, 10));
      json.writeNumberField("startMillis", day);
      json.writeFieldName("methods");
      writeTallies(json, evaluator, day, day + BacktestSettings.DAY_MILLIS, false);
      json.writeEndObject();
    }
    json.writeEndArray();
    json.writeEndObject();
  }

  private static void writeTallies(JsonGenerator json, Evaluator evaluator, long from, long to, boolean focus)
      throws IOException {
    writeTallies(json, evaluator, t -> t >= from && t < to, focus);
  }

  private static void writeTallies(JsonGenerator json, Evaluator evaluator, java.util.function.LongPredicate when,
      boolean focus) throws IOException {
    json.writeStartObject();
    for (EvaluationMethod method : EvaluationMethod.values()) {
      Tally tally = evaluator.tally(method, when, focus);
      json.writeObjectFieldStart(method.wireName());
      json.writeNumberField("trials", tally.trials());
      json.writeObjectFieldStart("hitAt");
      for (int k : evaluator.cutoffs()) {
        number(json, Integer.toString(k), tally.hitRate(k));
      }
      json.writeEndObject();
      number(json, "meanReciprocalRank", tally.meanReciprocalRank());
      json.writeEndObject();
    }
    json.writeEndObject();
  }

  private static void writeDetection(JsonGenerator json, Detection detection) throws IOException {
    json.writeObjectFieldStart("detection");
    json.writeNumberField("detected", detection.detected());
    json.writeNumberField("planted", detection.events().size());
    number(json, "medianDelayMinutes", detection.medianDelayMinutes());
    json.writeNumberField("falseAlerts", detection.falseAlerts());
    number(json, "falseAlertsPerSimulatedDay", detection.falseAlertsPerSimulatedDay());
    json.writeArrayFieldStart("events");
    for (Detection.PlantedEvent event : detection.events()) {
      json.writeStartObject();
      json.writeStringField("kind", event.kind().name());
      json.writeArrayFieldStart("pair");
      json.writeString(event.pair().first());
      json.writeString(event.pair().second());
      json.writeEndArray();
      time(json, "change", event.changeMillis());
      json.writeBooleanField("detected", event.detected());
      if (event.detected()) {
        time(json, "raised", event.raisedAtMillis());
      }
      number(json, "delayMinutes", event.delayMinutes());
      json.writeEndObject();
    }
    json.writeEndArray();
    json.writeEndObject();
  }

  /** {@code <name>Millis} and an ISO-8601 copy {@code <name>}. */
  private static void time(JsonGenerator json, String name, long millis) throws IOException {
    json.writeNumberField(name + "Millis", millis);
    json.writeStringField(name, Instant.ofEpochMilli(millis).toString());
  }

  /** A finite number, or null. */
  static void number(JsonGenerator json, String name, double value) throws IOException {
    if (Double.isFinite(value)) {
      json.writeNumberField(name, value);
    } else {
      json.writeNullField(name);
    }
  }
}
