package org.pairpulse.serve.drift;

import java.util.Locale;

/**
 * Plain words for an alert's evidence: what changed (rate, association or both), by how much, and the
 * before and after counts behind it. Used by the API, the alert sinks, the dashboard and the report.
 */
public final class DriftWords {
  private DriftWords() {}

  /** One sentence for an alert of {@code kind} that reports {@code change} (null: bundle or no entry). */
  public static String summary(AlertKind kind, DriftChange change, DriftFinding f) {
    if (f == null) {
      return "the pair left the published table";
    }
    String counts = String.format(Locale.ROOT, "%s of %s baskets recently%s against %s of %s in the reference period",
        count(f.recentPairBaskets()), count(f.recentBaskets()), scale(f.recentHalfLifeMillis()),
        count(f.baselinePairBaskets()), count(f.referenceBaskets()));
    if (kind == AlertKind.BUNDLE) {
      return String.format(Locale.ROOT, "now bought together almost always (smaller confidence %.2f, was %.2f); %s",
          f.recentMinConfidence(), f.referenceMinConfidence(), counts);
    }
    String rate = "bought together " + times(f.rateRatio()) + " as often per basket";
    String association = "association (odds ratio) " + times(f.oddsRatioRatio());
    String what;
    if (change == DriftChange.RATE) {
      what = rate + "; the items' own popularity does not explain it away";
    } else if (change == DriftChange.ASSOCIATION) {
      what = association + ", beyond the items' own popularity; " + rate;
    } else if (change == DriftChange.BOTH) {
      what = rate + " and " + association;
    } else {
      what = rate + "; " + association;
    }
    return what + " (" + counts + ")";
  }

  /** " (half-life 1 h)": which recent period the counts are (decays weigh each basket by its age); "" for windows. */
  private static String scale(long halfLifeMillis) {
    if (halfLifeMillis <= 0) {
      return "";
    }
    double hours = halfLifeMillis / 3_600_000.0;
    return hours == Math.rint(hours) ? String.format(Locale.ROOT, " (half-life %.0f h)", hours)
        : String.format(Locale.ROOT, " (half-life %.0f min)", halfLifeMillis / 60_000.0);
  }

  private static String times(double ratio) {
    if (Double.isNaN(ratio)) {
      return "×?";
    }
    if (Double.isInfinite(ratio)) {
      return "up from none";
    }
    return ratio >= 10 ? String.format(Locale.ROOT, "×%.0f", ratio)
        : ratio >= 0.1 ? String.format(Locale.ROOT, "×%.2f", ratio) : String.format(Locale.ROOT, "×%.3f", ratio);
  }

  private static String count(double value) {
    return value >= 100 || value == Math.rint(value) ? String.format(Locale.ROOT, "%,.0f", value)
        : String.format(Locale.ROOT, "%.1f", value);
  }
}
