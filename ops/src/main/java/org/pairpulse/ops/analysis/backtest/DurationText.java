package org.pairpulse.ops.analysis.backtest;

import java.time.Duration;
import java.time.format.DateTimeParseException;
import java.util.Locale;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import picocli.CommandLine.ITypeConverter;

/**
 * Durations on the command line and in settings files: a number with a unit ({@code 250ms}, {@code 90s},
 * {@code 5m}, {@code 6h}, {@code 2d}) or ISO-8601 ({@code PT5M}).
 */
public final class DurationText implements ITypeConverter<Duration> {
  private static final Pattern SHORT = Pattern.compile("(\\d+)\\s*(ms|s|m|min|h|d)");

  /** Parses {@code text}; throws {@link IllegalArgumentException} with the accepted forms. */
  public static Duration parse(String text) {
    String trimmed = text.trim().toLowerCase(Locale.ROOT);
    Matcher matcher = SHORT.matcher(trimmed);
    if (matcher.matches()) {
      long amount = Long.parseLong(matcher.group(1));
      switch (matcher.group(2)) {
        case "ms":
          return Duration.ofMillis(amount);
        case "s":
          return Duration.ofSeconds(amount);
        case "m":
        case "min":
          return Duration.ofMinutes(amount);
        case "h":
          return Duration.ofHours(amount);
        default:
          return Duration.ofDays(amount);
      }
    }
    try {
      return Duration.parse(text.trim());
    } catch (DateTimeParseException e) {
      throw new IllegalArgumentException("'" + text + "' is not a duration; use e.g. 250ms, 90s, 5m, 6h, 2d or PT5M");
    }
  }

  /** Days, hours, minutes and seconds as short as possible, e.g. {@code 1d6h}, {@code 5m}. */
  public static String format(long millis) {
    if (millis % 1000 != 0) {
      return millis + "ms";
    }
    long seconds = millis / 1000;
    StringBuilder out = new StringBuilder();
    long[] units = {86_400, 3_600, 60, 1};
    String[] names = {"d", "h", "m", "s"};
    for (int i = 0; i < units.length; i++) {
      if (seconds >= units[i]) {
        out.append(seconds / units[i]).append(names[i]);
        seconds %= units[i];
      }
    }
    return out.length() == 0 ? "0s" : out.toString();
  }

  @Override
  public Duration convert(String value) {
    return parse(value);
  }
}
