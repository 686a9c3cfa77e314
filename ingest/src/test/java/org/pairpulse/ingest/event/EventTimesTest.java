package org.pairpulse.ingest.event;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.time.Instant;
import java.time.LocalDate;
import java.time.OffsetDateTime;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The hand-written RFC 3339 parser against java.time (the slow, obvious oracle). */
class EventTimesTest {
  @Test
  void agreesWithJavaTimeOnRandomTimestamps() {
    Random random = new Random(3);
    for (int n = 0; n < 50_000; n++) {
      long millis = -2_000_000_000_000L + (long) (random.nextDouble() * 8_000_000_000_000L);
      int offsetMinutes = (random.nextInt(48) - 24) * 30;
      OffsetDateTime time = Instant.ofEpochMilli(millis).atOffset(ZoneOffset.ofTotalSeconds(offsetMinutes * 60));
      String text = random.nextBoolean() ? time.format(DateTimeFormatter.ISO_OFFSET_DATE_TIME)
          : time.format(DateTimeFormatter.ofPattern("uuuu-MM-dd'T'HH:mm:ss.SSSXXX"));
      assertEquals(expected(text), EventTimes.parse(text), text);
    }
  }

  private static long expected(String text) {
    return OffsetDateTime.parse(text).toInstant().toEpochMilli();
  }

  @Test
  void fractionsDatesAndVariants() {
    assertEquals(Instant.parse("2026-12-02T10:15:00.123Z").toEpochMilli(), EventTimes.parse("2026-12-02T10:15:00.123456789Z"));
    assertEquals(Instant.parse("2026-12-02T10:15:00.500Z").toEpochMilli(), EventTimes.parse("2026-12-02t10:15:00.5z"));
    assertEquals(Instant.parse("2026-12-02T10:15:00Z").toEpochMilli(), EventTimes.parse("2026-12-02 12:15:00+02:00"));
    assertEquals(LocalDate.of(2016, 2, 29).toEpochDay() * 86_400_000L, EventTimes.parse("2016-02-29"));
  }

  @ParameterizedTest
  @ValueSource(strings = {"", "2026-13-01", "2026-02-29", "2026-12-02T25:00:00Z", "2026-12-02T10:15:00", "2026-12-02T10:15:00.Z",
      "2026-12-02T10:15:60Z", "2026-12-02T10:15:00+0200", "2026/12/02", "2026-12-02T10:15:00Zjunk", "yesterday"})
  void refusesWhatIsNoTimestamp(String text) {
    assertThrows(IllegalArgumentException.class, () -> EventTimes.parse(text));
  }
}
