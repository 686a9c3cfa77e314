package org.pairpulse.ingest.file;

import java.util.ArrayList;
import java.util.List;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.event.EventTimes;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.event.LineItem;

/**
 * One CSV row {@code basket_id,timestamp,item} (RFC 4180 quoting) as a line item. The timestamp is epoch
 * milliseconds, an RFC 3339 timestamp or a date ({@code yyyy-mm-dd}, midnight UTC).
 */
final class CsvLineReader {
  static final String HEADER = "basket_id,timestamp,item";
  private final EventLimits limits;

  CsvLineReader(EventLimits limits) {
    this.limits = limits;
  }

  static boolean isHeader(String line) {
    return line.trim().replace("\"", "").equalsIgnoreCase(HEADER);
  }

  LineItem read(String line) throws InvalidEventException {
    List<String> fields = split(line);
    if (fields.size() != 3) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "expected 3 fields (" + HEADER + "), found " + fields.size());
    }
    String basket = fields.get(0).trim();
    String time = fields.get(1).trim();
    String item = fields.get(2).trim();
    if (basket.isEmpty() || time.isEmpty() || item.isEmpty()) {
      throw new InvalidEventException(DeadLetterReason.MISSING_FIELD, "empty field in a CSV row");
    }
    limits.checkId("basket id", basket);
    limits.checkId("item id", item);
    long millis;
    try {
      millis = time.chars().allMatch(c -> c >= '0' && c <= '9') || (time.startsWith("-") && time.length() > 1)
          ? Long.parseLong(time) : EventTimes.parse(time);
    } catch (IllegalArgumentException e) {
      throw new InvalidEventException(DeadLetterReason.WRONG_TYPE, "timestamp: " + e.getMessage());
    }
    limits.checkTime(millis);
    return new LineItem(basket, millis, item, false);
  }

  static List<String> split(String line) throws InvalidEventException {
    List<String> fields = new ArrayList<>(3);
    StringBuilder field = new StringBuilder();
    boolean quoted = false;
    boolean wasQuoted = false;
    for (int i = 0; i < line.length(); i++) {
      char c = line.charAt(i);
      if (quoted) {
        if (c == '"') {
          if (i + 1 < line.length() && line.charAt(i + 1) == '"') {
            field.append('"');
            i++;
          } else {
            quoted = false;
          }
        } else {
          field.append(c);
        }
      } else if (c == '"') {
        if (field.length() > 0 || wasQuoted) {
          throw new InvalidEventException(DeadLetterReason.MALFORMED, "a quote inside an unquoted CSV field");
        }
        quoted = true;
        wasQuoted = true;
      } else if (c == ',') {
        fields.add(field.toString());
        field.setLength(0);
        wasQuoted = false;
      } else {
        field.append(c);
      }
    }
    if (quoted) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED, "unterminated quoted CSV field");
    }
    fields.add(field.toString());
    return fields;
  }
}
