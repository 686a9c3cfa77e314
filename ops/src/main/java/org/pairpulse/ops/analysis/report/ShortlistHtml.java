package org.pairpulse.ops.analysis.report;

import java.io.IOException;
import java.io.Writer;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.List;
import java.util.Locale;

/**
 * The offer shortlist as one static HTML page: no script, no external resource, inline CSS and small inline SVG charts
 * (the lift interval of each row on a log axis; recent against baseline lift). The page is well-formed XML
 * (XHTML syntax) so that tools and tests can parse it.
 */
public final class ShortlistHtml {
  public static final String FILE = "shortlist.html";
  private static final DateTimeFormatter TIME = DateTimeFormatter.ofPattern("yyyy-MM-dd HH:mm 'UTC'", Locale.ROOT)
      .withZone(ZoneOffset.UTC);
  private static final int CHART_WIDTH = 180;
  private static final double MIN_LIFT = 0.5;

  private static final String STYLE = String.join("\n",
      "body{font:14px/1.45 system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;color:#1d2433;background:#f7f7f4;margin:0}",
      "main{max-width:1180px;margin:0 auto;padding:24px 28px 40px}",
      "h1{font-size:24px;margin:0 0 4px}h2{font-size:19px;margin:34px 0 4px;border-bottom:2px solid #1d2433;"
          + "padding-bottom:4px}h3{font-size:15px;margin:18px 0 6px;color:#3a4356}",
      "p.meta{color:#5b6478;margin:0 0 12px}nav a{margin-right:14px;color:#0b5d67}",
      "table{border-collapse:collapse;width:100%;background:#fff;border:1px solid #dcdcd5}",
      "th,td{padding:5px 8px;text-align:left;border-bottom:1px solid #ecece6;vertical-align:middle}",
      "th{font-size:12px;text-transform:uppercase;letter-spacing:.04em;color:#5b6478;background:#f0f0ea}",
      "td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}"
          + "td.rule{font-family:ui-monospace,Menlo,Consolas,monospace;"
          + "font-size:13px}",
      "p.empty{color:#5b6478;font-style:italic}footer{margin-top:36px;padding-top:10px;border-top:1px solid #c9c9c0;"
          + "color:#3a4356}",
      "svg{display:block}.legend{font-size:12px;color:#5b6478}td.why{font-size:12px;max-width:320px}");

  private ShortlistHtml() {}

  public static void write(ShortlistReport report, Writer out) throws IOException {
    ShortlistSettings settings = report.settings();
    StringBuilder html = new StringBuilder(64 * 1024);
    html.append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n")
        .append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n<title>pairpulse offer shortlist, ")
        .append(text(asOf(report))).append("</title>\n<style>\n").append(STYLE).append("\n</style>\n</head>\n<body>\n<main>\n");
    html.append("<h1>Offer shortlist</h1>\n<p class=\"meta\">Statistics as of ").append(text(asOf(report)))
        .append(" · suggestion pairs from the <b>").append(text(settings.horizon())).append("</b> horizon with confidence ")
        .append(fixed(settings.minConfidence(), 2)).append("–").append(fixed(settings.maxConfidence(), 2))
        .append(" · emerging: ").append(text(settings.drift().recentHorizon())).append(" against ")
        .append(text(settings.drift().referenceHorizon())).append(", signed √G² ≥ ")
        .append(fixed(settings.drift().enterRootG2(), 1)).append(" (rate or association) and ratio ≥ ")
        .append(fixed(settings.drift().enterRatio(), 2)).append(" · cohort floor ")
        .append(fixed(settings.cohortFloor(), 0)).append(" distinct baskets</p>\n");
    html.append("<p class=\"legend\">Charts: the lift interval on a log axis (dashed line: lift 1, independence; dot: the"
        + " lift); recent (dark) against baseline (light) lift.</p>\n");
    if (report.segments().size() > 1) {
      html.append("<nav>");
      for (int i = 0; i < report.segments().size(); i++) {
        html.append("<a href=\"#segment-").append(i).append("\">").append(text(report.segments().get(i).name()))
            .append("</a>");
      }
      html.append("</nav>\n");
    }
    for (int i = 0; i < report.segments().size(); i++) {
      segment(html, i, report.segments().get(i), settings);
    }
    footer(html, report);
    html.append("</main>\n</body>\n</html>\n");
    out.write(html.toString());
    out.flush();
  }

  private static String asOf(ShortlistReport report) {
    return report.asOfMillis() == Long.MIN_VALUE ? "(no data)" : TIME.format(Instant.ofEpochMilli(report.asOfMillis()));
  }

  private static void segment(StringBuilder html, int index, ShortlistReport.Segment segment, ShortlistSettings settings) {
    html.append("<section id=\"segment-").append(index).append("\">\n<h2>Segment ").append(text(segment.name()))
        .append("</h2>\n");
    if (segment.suppressed()) {
      html.append("<p class=\"empty\">Fewer baskets than the cohort floor in this segment: nothing is shown.</p>\n"
          + "</section>\n");
      return;
    }
    html.append("<p class=\"meta\">").append(String.format(Locale.ROOT, "%,.0f", segment.baskets())).append(" baskets in ")
        .append(text(settings.horizon())).append(" · ").append(String.format(Locale.ROOT, "%,d of %,d pairs screened",
            segment.passedPairs(), segment.screenedPairs()))
        .append(" passed the offer screen (size-adjusted association, false-discovery rate 5%)</p>\n");
    html.append("<h3>Emerging pairs</h3>\n");
    if (segment.emerging().isEmpty()) {
      html.append("<p class=\"empty\">No pair is emerging now.</p>\n");
    } else {
      double high = scale(segment.emerging());
      html.append("<table>\n<thead><tr><th>#</th><th>rule</th><th>recent vs baseline</th><th>lift recent</th>"
          + "<th>lift baseline</th><th>ratio</th><th>signed √G²</th><th>what changed</th><th>lift interval (recent)</th>"
          + "<th>confidence</th><th>support</th></tr></thead>\n<tbody>\n");
      for (ShortlistRow row : segment.emerging()) {
        html.append("<tr><td class=\"n\">").append(row.rank()).append("</td><td class=\"rule\">").append(rule(row))
            .append("</td><td>").append(driftChart(row, high)).append("</td><td class=\"n\">")
            .append(fixed(row.recentLift(), 2)).append("</td><td class=\"n\">").append(fixed(row.baselineLift(), 2))
            .append("</td><td class=\"n\">").append(fixed(row.liftRatio(), 2)).append("</td><td class=\"n\">")
            .append(fixed(row.signedRootG2(), 1)).append("</td><td class=\"why\"><b>").append(text(row.change()))
            .append("</b> ").append(text(row.evidence())).append("</td><td>").append(intervalChart(row, high))
            .append("</td><td class=\"n\">").append(fixed(row.confidence(), 3)).append("</td><td class=\"n\">")
            .append(percent(row.support())).append("</td></tr>\n");
      }
      html.append("</tbody>\n</table>\n");
    }
    html.append("<h3>Suggestion pairs</h3>\n");
    if (segment.suggestions().isEmpty()) {
      html.append("<p class=\"empty\">No rule inside the confidence band.</p>\n");
    } else {
      double high = scale(segment.suggestions());
      html.append("<table>\n<thead><tr><th>#</th><th>rule</th><th>lift interval</th><th>lift</th><th>interval</th>"
          + "<th>confidence</th><th>support</th><th>baskets with both</th><th>recent vs baseline</th></tr></thead>\n"
          + "<tbody>\n");
      for (ShortlistRow row : segment.suggestions()) {
        html.append("<tr><td class=\"n\">").append(row.rank()).append("</td><td class=\"rule\">").append(rule(row))
            .append("</td><td>").append(intervalChart(row, high)).append("</td><td class=\"n\">")
            .append(fixed(row.lift(), 2)).append("</td><td class=\"n\">").append(fixed(row.liftLower(), 2))
            .append("–").append(Double.isInfinite(row.liftUpper()) ? "∞" : fixed(row.liftUpper(), 2))
            .append("</td><td class=\"n\">").append(fixed(row.confidence(), 3)).append("</td><td class=\"n\">")
            .append(percent(row.support())).append("</td><td class=\"n\">").append(fixed(row.pairBaskets(), 0))
            .append("</td><td>").append(driftChart(row, high)).append("</td></tr>\n");
      }
      html.append("</tbody>\n</table>\n");
    }
    html.append("</section>\n");
  }

  private static void footer(StringBuilder html, ShortlistReport report) {
    html.append("<footer>\n<p>");
    int total = report.segments().stream().mapToInt(ShortlistReport.Segment::suppressedRows).sum();
    String floor = fixed(report.settings().cohortFloor(), 0);
    if (total == 0 && report.segments().stream().noneMatch(ShortlistReport.Segment::suppressed)) {
      html.append("No row was held back by the cohort floor (").append(floor).append(" distinct baskets).");
    } else {
      html.append("Held back by the cohort floor (fewer than ").append(floor).append(" distinct baskets behind them; not"
          + " shown): ");
      boolean first = true;
      for (ShortlistReport.Segment segment : report.segments()) {
        if (segment.suppressedRows() == 0 && !segment.suppressed()) {
          continue;
        }
        html.append(first ? "" : "; ").append(text(segment.name())).append(": ").append(segment.suppressedRows())
            .append(segment.suppressedRows() == 1 ? " row" : " rows")
            .append(segment.suppressed() ? " (the whole segment is under the floor)" : "");
        first = false;
      }
      html.append('.');
    }
    html.append("</p>\n<p>Generated by pairpulse report. Segment statistics exist only for configured segment attributes;"
        + " fine segments can single out people, so follow local data-protection law and practice.</p>\n</footer>\n");
  }

  private static String rule(ShortlistRow row) {
    return text(row.itemA()) + " → " + text(row.itemB());
  }

  /** The right end of a list's log axis: the largest finite interval end or lift, at least 2. */
  private static double scale(List<ShortlistRow> rows) {
    double high = 2;
    for (ShortlistRow row : rows) {
      for (double value : new double[] {row.liftUpper(), row.lift(), row.recentLift(), row.baselineLift()}) {
        if (Double.isFinite(value)) {
          high = Math.max(high, value);
        }
      }
    }
    return Math.min(high * 1.1, 10_000);
  }

  private static double x(double lift, double high) {
    double clamped = Math.max(MIN_LIFT, Math.min(high, lift));
    return 4 + (CHART_WIDTH - 8) * Math.log(clamped / MIN_LIFT) / Math.log(high / MIN_LIFT);
  }

  static String intervalChart(ShortlistRow row, double high) {
    StringBuilder svg = svgStart(20, "lift " + fixed(row.lift(), 2) + ", interval " + fixed(row.liftLower(), 2) + " to "
        + (Double.isInfinite(row.liftUpper()) ? "unbounded" : fixed(row.liftUpper(), 2)));
    double one = x(1, high);
    svg.append("<line x1=\"4\" y1=\"10\" x2=\"").append(CHART_WIDTH - 4).append("\" y2=\"10\" stroke=\"#d4d4cc\"/>");
    svg.append("<line x1=\"").append(fixed(one, 1)).append("\" y1=\"2\" x2=\"").append(fixed(one, 1))
        .append("\" y2=\"18\" stroke=\"#8a8f9c\" stroke-dasharray=\"2 2\"/>");
    if (Double.isFinite(row.liftLower())) {
      double upper = Double.isFinite(row.liftUpper()) ? row.liftUpper() : high;
      svg.append("<line x1=\"").append(fixed(x(row.liftLower(), high), 1)).append("\" y1=\"10\" x2=\"")
          .append(fixed(x(upper, high), 1)).append("\" y2=\"10\" stroke=\"#5fa8b0\" stroke-width=\"4\""
              + " stroke-linecap=\"round\"/>");
    }
    if (Double.isFinite(row.lift())) {
      svg.append("<circle cx=\"").append(fixed(x(row.lift(), high), 1))
          .append("\" cy=\"10\" r=\"3.5\" fill=\"#0b5d67\"/>");
    }
    return svg.append("</svg>").toString();
  }

  static String driftChart(ShortlistRow row, double high) {
    StringBuilder svg = svgStart(22, "recent lift " + fixed(row.recentLift(), 2) + ", baseline lift "
        + fixed(row.baselineLift(), 2));
    if (Double.isFinite(row.baselineLift())) {
      svg.append("<rect x=\"4\" y=\"3\" width=\"").append(fixed(Math.max(1, x(row.baselineLift(), high) - 4), 1))
          .append("\" height=\"7\" fill=\"#c9ccd4\"/>");
    }
    if (Double.isFinite(row.recentLift())) {
      svg.append("<rect x=\"4\" y=\"12\" width=\"").append(fixed(Math.max(1, x(row.recentLift(), high) - 4), 1))
          .append("\" height=\"7\" fill=\"#1d2433\"/>");
    }
    double one = x(1, high);
    svg.append("<line x1=\"").append(fixed(one, 1)).append("\" y1=\"1\" x2=\"").append(fixed(one, 1))
        .append("\" y2=\"21\" stroke=\"#8a8f9c\" stroke-dasharray=\"2 2\"/>");
    return svg.append("</svg>").toString();
  }

  private static StringBuilder svgStart(int height, String title) {
    return new StringBuilder(512).append("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"").append(CHART_WIDTH)
        .append("\" height=\"").append(height).append("\" viewBox=\"0 0 ").append(CHART_WIDTH).append(' ').append(height)
        .append("\" role=\"img\"><title>").append(text(title)).append("</title>");
  }

  static String fixed(double value, int decimals) {
    return Double.isFinite(value) ? String.format(Locale.ROOT, "%." + decimals + "f", value) : "–";
  }

  private static String percent(double share) {
    return Double.isFinite(share) ? String.format(Locale.ROOT, "%.2f%%", 100 * share) : "–";
  }

  /** Escapes text for HTML and XML. */
  static String text(String value) {
    StringBuilder out = new StringBuilder(value.length() + 8);
    for (int i = 0; i < value.length(); i++) {
      char c = value.charAt(i);
      switch (c) {
        case '&' -> out.append("&amp;");
        case '<' -> out.append("&lt;");
        case '>' -> out.append("&gt;");
        case '"' -> out.append("&quot;");
        case '\'' -> out.append("&#39;");
        default -> {
          if (c < 0x20 && c != '\n' && c != '\t') {
            out.append(' ');
          } else {
            out.append(c);
          }
        }
      }
    }
    return out.toString();
  }
}
