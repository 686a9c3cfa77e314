package org.pairpulse.ops.tools.scenario;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Iterator;
import java.util.Map;

/**
 * Writes a scenario to files a backtest can replay. All files are UTF-8 with {@code \n} line ends; times are
 * epoch milliseconds (event time).
 *
 * <h2>{@value #CSV_FILE}: one line per item</h2>
 * <pre>
 * basket_id,timestamp,item
 * kc-000000001,1780272002316,protect-basic
 * kc-000000002,1780272011017,boost-1gb
 * kc-000000002,1780272011017,pack-sports
 * kc-000000002,1780272011017,plan-prepaid-50gb-90d
 * </pre>
 * A header, then the items of each basket on consecutive lines in basket order (items in lexicographic
 * order). Fields holding a comma, quote or line break would be quoted as in RFC 4180; scenario ids never do.
 * Attributes are not in the CSV.
 *
 * <h2>{@value #JSON_LINES_FILE}: one basket per line</h2>
 * <pre>
 * {"id":"kc-000000001","time":1780272002316,"items":["protect-basic"],"attributes":{"channel":"web","region":"capital"}}
 * </pre>
 * (the first basket of {@link ScenarioConfig#defaults()}): ingest's basket event ({@code id}, {@code time} in epoch
 * milliseconds, {@code items}, {@code attributes}; see {@code ingest/README-ingest.md}), so the file replays through
 * ingest's file source and the backtest, and each line can be sent to Kafka as a record value. Keys in this order;
 * attributes in the basket's order.
 *
 * <h2>{@value #GROUND_TRUTH_FILE}</h2>
 * {@link ScenarioGroundTruth#toJson()}.
 *
 * <p>The CSV rows are ingest's CSV line items ({@code basket_id,timestamp,item}).
 */
public final class ScenarioFiles {
  public static final String CSV_HEADER = "basket_id,timestamp,item";
  public static final String CSV_FILE = "baskets.csv";
  public static final String JSON_LINES_FILE = "baskets.jsonl";
  public static final String GROUND_TRUTH_FILE = "ground-truth.json";

  private ScenarioFiles() {}

  /**
   * Writes {@value #CSV_FILE}, {@value #JSON_LINES_FILE} and {@value #GROUND_TRUTH_FILE} into
   * {@code directory} (created if absent; files replaced) in one pass over the scenario.
   *
   * @return the number of baskets written
   */
  public static long writeAll(ScenarioGenerator scenario, Path directory) throws IOException {
    Files.createDirectories(directory);
    long baskets = 0;
    try (Writer csv = Files.newBufferedWriter(directory.resolve(CSV_FILE), StandardCharsets.UTF_8);
        Writer jsonLines = Files.newBufferedWriter(directory.resolve(JSON_LINES_FILE), StandardCharsets.UTF_8)) {
      csv.write(CSV_HEADER);
      csv.write('\n');
      StringBuilder line = new StringBuilder(256);
      for (ScenarioBasket basket : scenario) {
        line.setLength(0);
        csv.append(csvLines(line, basket));
        line.setLength(0);
        jsonLines.append(jsonLine(line, basket)).append('\n');
        baskets++;
      }
    }
    writeGroundTruth(scenario.groundTruth(), directory.resolve(GROUND_TRUTH_FILE));
    return baskets;
  }

  /**
   * Writes the header and the item lines of every basket to {@code out} (not closed).
   *
   * @return the number of baskets written
   */
  public static long writeCsv(Iterator<ScenarioBasket> baskets, Writer out) throws IOException {
    out.write(CSV_HEADER);
    out.write('\n');
    StringBuilder lines = new StringBuilder(256);
    long count = 0;
    while (baskets.hasNext()) {
      lines.setLength(0);
      out.append(csvLines(lines, baskets.next()));
      count++;
    }
    out.flush();
    return count;
  }

  /**
   * Writes one JSON line per basket to {@code out} (not closed).
   *
   * @return the number of baskets written
   */
  public static long writeJsonLines(Iterator<ScenarioBasket> baskets, Writer out) throws IOException {
    StringBuilder line = new StringBuilder(256);
    long count = 0;
    while (baskets.hasNext()) {
      line.setLength(0);
      out.append(jsonLine(line, baskets.next())).append('\n');
      count++;
    }
    out.flush();
    return count;
  }

  /** Writes {@link ScenarioGroundTruth#toJson()} to {@code file} (replaced). */
  public static void writeGroundTruth(ScenarioGroundTruth truth, Path file) throws IOException {
    try (BufferedWriter out = Files.newBufferedWriter(file, StandardCharsets.UTF_8)) {
      out.write(truth.toJson());
    }
  }

  /** One basket as its JSON line (ingest's basket event), without the line end (for a Kafka producer, say). */
  public static String jsonLine(ScenarioBasket basket) {
    return jsonLine(new StringBuilder(256), basket).toString();
  }

  private static StringBuilder jsonLine(StringBuilder out, ScenarioBasket basket) {
    out.append("{\"id\":");
    JsonText.string(out, basket.id()).append(",\"time\":").append(basket.eventMillis()).append(",\"items\":[");
    for (int i = 0; i < basket.items().size(); i++) {
      if (i > 0) {
        out.append(',');
      }
      JsonText.string(out, basket.items().get(i));
    }
    out.append("],\"attributes\":{");
    boolean first = true;
    for (Map.Entry<String, String> attribute : basket.attributes().entrySet()) {
      if (!first) {
        out.append(',');
      }
      first = false;
      JsonText.string(out, attribute.getKey()).append(':');
      JsonText.string(out, attribute.getValue());
    }
    return out.append("}}");
  }

  private static StringBuilder csvLines(StringBuilder out, ScenarioBasket basket) {
    for (String item : basket.items()) {
      csvField(out, basket.id()).append(',').append(basket.eventMillis()).append(',');
      csvField(out, item).append('\n');
    }
    return out;
  }

  private static StringBuilder csvField(StringBuilder out, String field) {
    boolean quote = false;
    for (int i = 0; i < field.length() && !quote; i++) {
      char c = field.charAt(i);
      quote = c == ',' || c == '"' || c == '\n' || c == '\r';
    }
    if (!quote) {
      return out.append(field);
    }
    return out.append('"').append(field.replace("\"", "\"\"")).append('"');
  }
}
