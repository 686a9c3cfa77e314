package org.pairpulse.ops.analysis.report;

import java.io.IOException;
import java.io.Writer;
import java.util.List;
import java.math.BigDecimal;
import java.math.MathContext;

/**
 * The offer shortlist as CSV (RFC 4180, {@code \n} line ends, a header row). Numbers with six significant digits in plain
 * decimal notation; a missing number (NaN) or an unbounded one (+∞) is an empty field.
 *
 * <pre>
 * segment,list,rank,item_a,item_b,horizon,pair_baskets,support,confidence,lift,lift_lower,lift_upper,recent_lift,baseline_lift,lift_ratio,signed_root_g2
 * </pre>
 * {@value #SUPPRESSED_FILE} holds, per segment, how many rows the cohort floor held back:
 * <pre>
 * segment,suppressed_rows,segment_under_floor
 * </pre>
 */
public final class ShortlistCsv {
  public static final String FILE = "shortlist.csv";
  public static final String SUPPRESSED_FILE = "shortlist-suppressed.csv";
  public static final List<String> COLUMNS = List.of("segment", "list", "rank", "item_a", "item_b", "horizon",
      "pair_baskets", "support", "confidence", "lift", "lift_lower", "lift_upper", "recent_lift", "baseline_lift",
      "lift_ratio", "signed_root_g2", "drift_change", "evidence");
  public static final List<String> SUPPRESSED_COLUMNS = List.of("segment", "suppressed_rows", "segment_under_floor");

  private ShortlistCsv() {}

  /** Writes the rows of every segment, emerging then suggestion rows. */
  public static void write(ShortlistReport report, Writer out) throws IOException {
    out.write(String.join(",", COLUMNS));
    out.write('\n');
    for (ShortlistReport.Segment segment : report.segments()) {
      for (List<ShortlistRow> rows : List.of(segment.emerging(), segment.suggestions())) {
        for (ShortlistRow row : rows) {
          out.write(String.join(",", field(segment.name()), row.list(), Integer.toString(row.rank()), field(row.itemA()),
              field(row.itemB()), field(row.horizon()), number(row.pairBaskets()), number(row.support()),
              number(row.confidence()), number(row.lift()), number(row.liftLower()), number(row.liftUpper()),
              number(row.recentLift()), number(row.baselineLift()), number(row.liftRatio()),
              number(row.signedRootG2()), field(row.change()), field(row.evidence())));
          out.write('\n');
        }
      }
    }
    out.flush();
  }

  /** Writes the per-segment counts of rows held back by the cohort floor. */
  public static void writeSuppressed(ShortlistReport report, Writer out) throws IOException {
    out.write(String.join(",", SUPPRESSED_COLUMNS));
    out.write('\n');
    for (ShortlistReport.Segment segment : report.segments()) {
      out.write(field(segment.name()) + "," + segment.suppressedRows() + "," + segment.suppressed() + "\n");
    }
    out.flush();
  }

  /** Six significant digits, plain notation; empty for NaN and infinities. */
  static String number(double value) {
    if (!Double.isFinite(value)) {
      return "";
    }
    if (value == 0) {
      return "0";
    }
    return new BigDecimal(value).round(new MathContext(6)).stripTrailingZeros().toPlainString();
  }

  static String field(String value) {
    boolean quote = value.indexOf(',') >= 0 || value.indexOf('"') >= 0 || value.indexOf('\n') >= 0
        || value.indexOf('\r') >= 0;
    return quote ? '"' + value.replace("\"", "\"\"") + '"' : value;
  }
}
