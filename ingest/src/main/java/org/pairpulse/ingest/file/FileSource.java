package org.pairpulse.ingest.file;

import java.io.BufferedReader;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.Writer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.EnumMap;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.zip.GZIPInputStream;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.DeadLetterReason;
import org.pairpulse.ingest.event.EventDecoder;
import org.pairpulse.ingest.event.EventLimits;
import org.pairpulse.ingest.event.InvalidEventException;
import org.pairpulse.ingest.front.BasketSink;
import org.pairpulse.ingest.front.FrontSettings;
import org.pairpulse.ingest.front.PartitionFront;
import org.pairpulse.sketch.engine.PairEngine;

/**
 * Backfill and offline runs: reads files with the same decoding, checks, dedupe and assembly as the Kafka
 * path, into one engine or any {@link BasketSink} (a file is one ordered stream, like one partition). A sink
 * sees each basket with its id and attributes (whole baskets; assembled ones carry none) before anything
 * counts it: the hook a replay that evaluates before it trains needs.
 *
 * <ul>
 *   <li>JSON lines ({@code .jsonl}, {@code .ndjson}, {@code .json}): one event per line, plain or a
 *       structured-mode CloudEvent, exactly as a record value.</li>
 *   <li>CSV ({@code .csv}): rows {@code basket_id,timestamp,item}, an optional header row; every row is
 *       a line item, and a basket closes by the inactivity gap or at the end of the file.</li>
 *   <li>Either may be gzip-compressed ({@code .gz}).</li>
 * </ul>
 * Unusable lines are counted per reason and, if a dead-letter writer is given, written to it as JSON lines
 * {@code {"reason":..., "detail":..., "file":..., "line":..., "text":...}}. Not thread-safe.
 */
public final class FileSource {
  /** What one file gave. */
  public record Result(long lines, long baskets, long duplicates, Map<DeadLetterReason, Long> deadLetters) {
    public long deadLetterTotal() {
      return deadLetters.values().stream().mapToLong(Long::longValue).sum();
    }
  }

  private final EventDecoder decoder;
  private final CsvLineReader csv;
  private final PartitionFront front;
  private final BasketSink sink;
  private final Writer deadLetterWriter;

  /**
   * @param engine the engine the baskets go to (written on the caller's thread)
   * @param deadLetterWriter where unusable lines go as JSON lines, or null to only count them
   */
  public FileSource(EventLimits limits, FrontSettings settings, PairEngine engine, Writer deadLetterWriter) {
    this(limits, settings, engineSink(Objects.requireNonNull(engine, "engine")), deadLetterWriter);
  }

  /**
   * @param sink where the baskets go, in order, on the caller's thread
   * @param deadLetterWriter where unusable lines go as JSON lines, or null to only count them
   */
  public FileSource(EventLimits limits, FrontSettings settings, BasketSink sink, Writer deadLetterWriter) {
    this.decoder = new EventDecoder(limits);
    this.csv = new CsvLineReader(limits);
    this.front = new PartitionFront(settings);
    this.sink = Objects.requireNonNull(sink, "sink");
    this.deadLetterWriter = deadLetterWriter;
  }

  private static BasketSink engineSink(PairEngine engine) {
    return (id, eventMillis, items) -> engine.addBasket(eventMillis, items.toArray(new String[0]));
  }

  /** The front (its watermark and counters) shared by every file read through this source. */
  public PartitionFront front() {
    return front;
  }

  /**
   * Reads one file to its end, then closes its open baskets, telling {@code progress} how far it got (null:
   * {@link ReadProgress#NONE}).
   */
  public Result read(Path file, ReadProgress progress) throws IOException {
    String name = file.getFileName().toString().toLowerCase(Locale.ROOT);
    boolean gzip = name.endsWith(".gz");
    String plain = gzip ? name.substring(0, name.length() - 3) : name;
    boolean isCsv = plain.endsWith(".csv");
    long[] bytesRead = new long[1];
    Map<DeadLetterReason, Long> deadLetters = new EnumMap<>(DeadLetterReason.class);
    long lines = 0;
    long[] baskets = new long[1];
    long duplicates = 0;
    BasketSink counted = BasketSink.withAttributes((basketId, eventMillis, items, attributes) -> {
      sink.basket(basketId, eventMillis, items, attributes);
      baskets[0]++;
    });
    InputStream raw = Files.newInputStream(file);
    InputStream counting = new FilterInputStream(raw) {
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
    try (BufferedReader reader = new BufferedReader(new InputStreamReader(gzip ? new GZIPInputStream(counting, 1 << 16) : counting,
        StandardCharsets.UTF_8.newDecoder().onMalformedInput(CodingErrorAction.REPORT)), 1 << 16)) {
      String line;
      while (true) {
        try {
          line = reader.readLine();
        } catch (CharacterCodingException e) {
          throw new IOException(file + ": invalid UTF-8 after line " + lines + "; the file must be UTF-8", e);
        }
        if (line == null) {
          break;
        }
        lines++;
        if (line.isBlank() || (isCsv && lines == 1 && CsvLineReader.isHeader(line))) {
          continue;
        }
        BasketEvent event;
        try {
          if (isCsv) {
            event = csv.read(line);
          } else {
            byte[] bytes = line.getBytes(StandardCharsets.UTF_8);
            event = decoder.decodeJson(bytes, 0, bytes.length);
          }
        } catch (InvalidEventException e) {
          deadLetter(deadLetters, e.reason(), e.detail(), file, lines, line);
          continue;
        }
        switch (front.accept(event, counted)) {
          case ACCEPTED -> { }
          case DUPLICATE -> duplicates++;
          case LATE -> deadLetter(deadLetters, DeadLetterReason.LATE, "event time before the watermark " + front.watermarkMillis(),
              file, lines, line);
          case OVERSIZED -> deadLetter(deadLetters, DeadLetterReason.OVERSIZED_BASKET, "basket exceeds max.basket.items",
              file, lines, line);
          default -> throw new IllegalStateException();
        }
        if (progress != null && (lines & 1023) == 0) {
          progress.update(bytesRead[0], lines, baskets[0], sum(deadLetters));
        }
      }
    }
    front.flush(counted);
    if (progress != null) {
      progress.finish(bytesRead[0], lines, baskets[0], sum(deadLetters));
    }
    if (deadLetterWriter != null) {
      deadLetterWriter.flush();
    }
    return new Result(lines, baskets[0], duplicates, deadLetters);
  }

  private void deadLetter(Map<DeadLetterReason, Long> counts, DeadLetterReason reason, String detail, Path file, long line,
      String text) throws IOException {
    counts.merge(reason, 1L, Long::sum);
    if (deadLetterWriter != null) {
      deadLetterWriter.write("{\"reason\":" + quote(reason.wireName()) + ",\"detail\":" + quote(detail) + ",\"file\":"
          + quote(file.toString()) + ",\"line\":" + line + ",\"text\":" + quote(text) + "}\n");
    }
  }

  private static long sum(Map<DeadLetterReason, Long> counts) {
    return counts.values().stream().mapToLong(Long::longValue).sum();
  }

  /** A JSON string literal. */
  static String quote(String s) {
    StringBuilder out = new StringBuilder(s.length() + 2).append('"');
    for (int i = 0; i < s.length(); i++) {
      char c = s.charAt(i);
      switch (c) {
        case '"' -> out.append("\\\"");
        case '\\' -> out.append("\\\\");
        case '\n' -> out.append("\\n");
        case '\r' -> out.append("\\r");
        case '\t' -> out.append("\\t");
        default -> {
          if (c < 0x20) {
            out.append(String.format(Locale.ROOT, "\\u%04x", (int) c));
          } else {
            out.append(c);
          }
        }
      }
    }
    return out.append('"').toString();
  }
}
