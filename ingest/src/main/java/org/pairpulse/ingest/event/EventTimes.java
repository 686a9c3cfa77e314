package org.pairpulse.ingest.event;

/**
 * Event-time parsing without {@code java.time} on the hot path: RFC 3339 timestamps (the CloudEvents
 * {@code time} format) and plain dates, to epoch milliseconds.
 *
 * <p>Accepted: {@code yyyy-mm-ddThh:mm:ss[.fraction](Z|±hh:mm)} (a lower-case {@code t}/{@code z} or a
 * space instead of {@code T} too, as RFC 3339 §5.6 allows), and {@code yyyy-mm-dd} (midnight UTC).
 * Fractions beyond milliseconds are truncated; leap seconds ({@code :60}) are refused. The day count
 * is the civil-from-days inverse of H. Hinnant's "chrono-compatible low-level date algorithms"; the
 * tests compare every result with {@code java.time.OffsetDateTime}.
 */
public final class EventTimes {
  private EventTimes() {}

  /** Epoch milliseconds of {@code text}, or throws {@link IllegalArgumentException} saying why not. */
  public static long parse(CharSequence text) {
    int n = text.length();
    if (n < 10) {
      throw bad(text, "too short for a date");
    }
    int year = digitsThen(text, 0, 4, '-');
    int month = digitsThen(text, 5, 2, '-');
    int day = digits(text, 8, 2);
    require(month >= 1 && month <= 12 && day >= 1 && day <= daysInMonth(year, month), text, "no such date");
    long days = daysFromCivil(year, month, day);
    if (n == 10) {
      return days * 86_400_000L;
    }
    char t = text.charAt(10);
    if (t != 'T' && t != 't' && t != ' ') {
      throw bad(text, "expected 'T' after the date");
    }
    if (n < 20) {
      throw bad(text, "too short for a date-time with offset");
    }
    int hour = digitsThen(text, 11, 2, ':');
    int minute = digitsThen(text, 14, 2, ':');
    int second = digits(text, 17, 2);
    require(hour <= 23 && minute <= 59 && second <= 59, text, "no such time of day");
    int i = 19;
    int millis = 0;
    if (text.charAt(i) == '.') {
      i++;
      int start = i;
      while (i < n && isDigit(text.charAt(i))) {
        if (i - start < 3) {
          millis = millis * 10 + (text.charAt(i) - '0');
        }
        i++;
      }
      int fractionDigits = i - start;
      if (fractionDigits == 0) {
        throw bad(text, "empty fraction of a second");
      }
      for (int k = fractionDigits; k < 3; k++) {
        millis *= 10;
      }
    }
    if (i >= n) {
      throw bad(text, "missing offset (Z or ±hh:mm)");
    }
    char zone = text.charAt(i);
    int offsetMinutes;
    if (zone == 'Z' || zone == 'z') {
      offsetMinutes = 0;
      i++;
    } else if (zone == '+' || zone == '-') {
      if (i + 6 != n) {
        throw bad(text, "offset must be ±hh:mm");
      }
      int oh = digitsThen(text, i + 1, 2, ':');
      int om = digits(text, i + 4, 2);
      require(oh <= 23 && om <= 59, text, "no such offset");
      offsetMinutes = (oh * 60 + om) * (zone == '-' ? -1 : 1);
      i += 6;
    } else {
      throw bad(text, "missing offset (Z or ±hh:mm)");
    }
    if (i != n) {
      throw bad(text, "trailing characters");
    }
    long secondsOfDay = hour * 3600L + minute * 60L + second - offsetMinutes * 60L;
    return (days * 86_400L + secondsOfDay) * 1000L + millis;
  }

  /** {@code width} digits at {@code at}, followed by {@code separator}. */
  private static int digitsThen(CharSequence text, int at, int width, char separator) {
    int value = digits(text, at, width);
    expect(text, at + width, separator);
    return value;
  }

  private static void require(boolean holds, CharSequence text, String why) {
    if (!holds) {
      throw bad(text, why);
    }
  }

  /** Days since 1970-01-01 of a proleptic Gregorian date (Hinnant's days_from_civil). */
  static long daysFromCivil(int year, int month, int day) {
    int y = month <= 2 ? year - 1 : year;
    int era = Math.floorDiv(y, 400);
    int yearOfEra = y - era * 400;
    int monthIndex = month > 2 ? month - 3 : month + 9;
    int dayOfYear = (153 * monthIndex + 2) / 5 + day - 1;
    int dayOfEra = yearOfEra * 365 + yearOfEra / 4 - yearOfEra / 100 + dayOfYear;
    return era * 146_097L + dayOfEra - 719_468L;
  }

  private static int daysInMonth(int year, int month) {
    switch (month) {
      case 2:
        boolean leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
        return leap ? 29 : 28;
      case 4:
      case 6:
      case 9:
      case 11:
        return 30;
      default:
        return 31;
    }
  }

  private static boolean isDigit(char c) {
    return c >= '0' && c <= '9';
  }

  private static int digits(CharSequence text, int from, int count) {
    if (from + count > text.length()) {
      throw bad(text, "ends early");
    }
    int value = 0;
    for (int i = from; i < from + count; i++) {
      char c = text.charAt(i);
      if (!isDigit(c)) {
        throw bad(text, "expected a digit at position " + i);
      }
      value = value * 10 + (c - '0');
    }
    return value;
  }

  private static void expect(CharSequence text, int at, char c) {
    if (at >= text.length() || text.charAt(at) != c) {
      throw bad(text, "expected '" + c + "' at position " + at);
    }
  }

  private static IllegalArgumentException bad(CharSequence text, String why) {
    String shown = text.length() > 40 ? text.subSequence(0, 40) + "..." : text.toString();
    return new IllegalArgumentException("not an RFC 3339 timestamp or date: '" + shown + "' (" + why + ")");
  }
}
