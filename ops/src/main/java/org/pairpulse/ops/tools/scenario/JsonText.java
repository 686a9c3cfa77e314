package org.pairpulse.ops.tools.scenario;

import java.math.BigDecimal;
import java.math.MathContext;

/** The little JSON the scenario files need: quoted strings and numbers. No parser, no tree. */
final class JsonText {
  private static final char[] HEX = "0123456789abcdef".toCharArray();

  private JsonText() {}

  /** Appends {@code text} as a JSON string (quotes, backslash and control characters escaped). */
  static StringBuilder string(StringBuilder out, String text) {
    out.append('"');
    for (int i = 0; i < text.length(); i++) {
      char c = text.charAt(i);
      switch (c) {
        case '"': out.append("\\\""); break;
        case '\\': out.append("\\\\"); break;
        case '\n': out.append("\\n"); break;
        case '\r': out.append("\\r"); break;
        case '\t': out.append("\\t"); break;
        default:
          if (c < 0x20) {
            out.append("\\u00").append(HEX[c >> 4]).append(HEX[c & 0xF]);
          } else {
            out.append(c);
          }
      }
    }
    return out.append('"');
  }

  /** Appends {@code value} rounded to 6 significant digits, plain notation; NaN and infinities as null. */
  static StringBuilder number(StringBuilder out, double value) {
    if (Double.isNaN(value) || Double.isInfinite(value)) {
      return out.append("null");
    }
    if (value == 0) {
      return out.append('0');
    }
    return out.append(new BigDecimal(value).round(new MathContext(6)).stripTrailingZeros().toPlainString());
  }
}
