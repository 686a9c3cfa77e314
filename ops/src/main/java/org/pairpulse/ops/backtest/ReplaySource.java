package org.pairpulse.ops.backtest;

import java.io.BufferedReader;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.function.Consumer;
import java.util.zip.GZIPInputStream;
import org.pairpulse.ingest.event.Basket;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.event.EventTimes;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.event.LineItem;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ingest.file.ProgressDisplay;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;

/**
 * Reads a basket file exactly as ingest's {@link FileSource} does (same {@link EventDecoder}, the same CSV
 * rules, the same {@link PartitionFront}: lateness, dedupe, line-item assembly), but hands each basket to a
 * consumer <em>before</em> anything counts it, with the basket's id and attributes. The backtest needs that
 * hook: the evaluation tests a basket before it trains the state, and refreshes follow the baskets' event
 * time.
 *
 * <p>Adapter: {@code FileSource} writes straight into a {@code PairEngine} and its {@code BasketSink} carries
 * neither the basket id's attributes nor a hook. When ingest offers a file source over a sink with attributes,
 * this class becomes a thin wrapper of it. {@code ReplaySourceTest} checks that both give byte-identical engine
 * snapshots on JSON lines and CSV.
 *
 * <p>Formats: JSON lines ({@code .jsonl}, {@code .ndjson}, {@code .json}) and CSV ({@code .csv}, rows
 * {@code basket_id,timestamp,item}, RFC 4180 quoting, optional header), either gzip-compressed ({@code .gz}).
 * Not thread-safe.
 */
public final class ReplaySource {
  static final String CSV_HEADER = "basket_id,timestamp,item";

  private final EventLimits limits;
  private final EventDecoder decoder;
  private final PartitionFront front;

  public ReplaySource(EventLimits limits, FrontSettings settings) {
    this.limits = Objects.requireNonNull(limits, "limits");
    this.decoder = new EventDecoder(limits);
    this.front = new PartitionFront(settings);
  }

  /** The front (watermark, counters). */
  public PartitionFront front() {
    return front;
  }

  /** Reads {@code file} to its end, then closes its open baskets; {@code progress} may be null. */
  public FileSource.Result read(Path file, ProgressDisplay progress, Consumer<ReplayBasket> sink) throws IOException {
    String name = file.getFileName().toString().toLowerCase(Locale.ROOT);
    boolean gzip = name.endsWith(".gz");
    String plain = gzip ? name.substring(0, name.length() - 3) : name;
    boolean isCsv = plain.endsWith(".csv");
    long[] bytesRead = new long[1];
    long[] baskets = new long[1];
    Map<DeadLetterReason, Long> deadLetters = new EnumMap<>(DeadLetterReason.class);
    long lines = 0;
    long duplicates = 0;
    // the basket event being accepted: the front calls the sink synchronously with it (and may close
    // assembled line-item baskets in the same call, which have no attributes)
    Basket[] current = new Basket[1];
    BasketSink toSink = (id, t, items) -> {
      Basket event = current[0];
      Map<String, String> attributes = event != null && event.basketId().equals(id) ? event.attributes() : Map.of();
      sink.accept(new ReplayBasket(id, t, items, attributes));
      baskets[0]++;
    };
    InputStream counting = new FilterInputStream(Files.newInputStream(file)) {
      @Override
      public int read() throws IOException {
        int b = super.read();
        if (b >= 0) {
          bytesRead[0]++;
        }
        return b;
      }

      @Override
      public int read(byte[] buffer, int off, int len) throws IOException {
        int n = super.read(buffer, off, len);
        if (n > 0) {
          bytesRead[0] += n;
        }
        return n;
      }
    };
    try (BufferedReader reader = new BufferedReader(new InputStreamReader(
        gzip ? new GZIPInputStream(counting, 1 << 16) : counting,
        StandardCharsets.UTF_8.newDecoder().onMalformedInput(CodingErrorAction.REPORT)), 1 << 16)) {
      while (true) {
        String line;
        try {
          line = reader.readLine();
        } catch (CharacterCodingException e) {
          throw new IOException(file + ": invalid UTF-8 after line " + lines + "; the file must be UTF-8", e);
        }
        if (line == null) {
          break;
        }
        lines++;
        if (line.isBlank() || (isCsv && lines == 1 && isCsvHeader(line))) {
          continue;
        }
        BasketEvent event;
        try {
          if (isCsv) {
            event = csvRow(line);
          } else {
            byte[] bytes = line.getBytes(StandardCharsets.UTF_8);
            event = decoder.decodeJson(bytes, 0, bytes.length);
          }
        } catch (InvalidEventException e) {
          deadLetters.merge(e.reason(), 1L, Long::sum);
          continue;
        }
        current[0] = event instanceof Basket basket ? basket : null;
        PartitionFront.Outcome outcome = front.accept(event, toSink);
        current[0] = null;
        switch (outcome) {
          case ACCEPTED -> { }
          case DUPLICATE -> duplicates++;
          case LATE -> deadLetters.merge(DeadLetterReason.LATE, 1L, Long::sum);
          case OVERSIZED -> deadLetters.merge(DeadLetterReason.OVERSIZED_BASKET, 1L, Long::sum);
          default -> throw new IllegalStateException("unknown outcome " + outcome);
        }
        if (progress != null && (lines & 1023) == 0) {
          progress.update(bytesRead[0], lines, baskets[0], sum(deadLetters));
        }
      }
    }
    front.flush(toSink);
    if (progress != null) {
      progress.finish(bytesRead[0], lines, baskets[0], sum(deadLetters));
    }
    return new FileSource.Result(lines, baskets[0], duplicates, deadLetters);
  }

  private static long sum(Map<DeadLetterReason, Long> counts) {
    return counts.values().stream().mapToLong(Long::longValue).sum();
  }

  static boolean isCsvHeader(String line) {
    return line.trim().replace("\"", "").equalsIgnoreCase(CSV_HEADER);
  }

  /** One CSV row as a line item: the rules of ingest's (package-private) CSV reader. */
  LineItem csvRow(String line) throws InvalidEventException {
    List<String> fields = splitCsv(line);
    if (fields.size() != 3) {
      throw new InvalidEventException(DeadLetterReason.MALFORMED,
          "expected 3 fields (" + CSV_HEADER + "), found " + fields.size());
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

  static List<String> splitCsv(String line) throws InvalidEventException {
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
