package org.pairpulse.ingest.front;

import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.PriorityQueue;
import org.pairpulse.ingest.event.Basket;
import org.pairpulse.ingest.event.BasketEvent;
import org.pairpulse.ingest.event.LineItem;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;

/**
 * What stands between a partition's decoded events and its engine: the event-time watermark and the
 * lateness test, the dedupe window, and the assembly of line items into baskets.
 *
 * <h2>Watermark</h2>
 * {@code maxEventMillis} is the newest event time accepted in the partition; the watermark is
 * {@code maxEventMillis − allowedLatenessMillis}. An event older than the watermark is {@link Outcome#LATE}.
 *
 * <h2>Line items</h2>
 * Lines of one basket id collect in an open basket that closes when (a) a line says {@code end}, or (b)
 * the watermark passes its deadline {@code min(last + lineGapMillis, first + lineMaxAgeMillis)}, or (c)
 * {@link #flush} is called (end of a file). A closed basket's event time is its newest line's time. Its id
 * joins the dedupe window, so lines re-delivered after it closed count as duplicates.
 *
 * <h2>State and threading</h2>
 * Everything here is part of the partition's checkpoint ({@link #encode}, {@link #decode}), so a restart
 * decides exactly as an uninterrupted run would. Not thread-safe: one thread (the poll loop) owns it.
 */
public final class PartitionFront {
  /** What happened to one event. */
  public enum Outcome {
    /** Counted (a basket went to the sink) or added to an open basket. */
    ACCEPTED,
    /** A basket id seen within the dedupe horizon: dropped and counted. */
    DUPLICATE,
    /** Older than the watermark: a dead letter. */
    LATE,
    /** A line that would make its basket larger than {@code maxBasketItems}: a dead letter. */
    OVERSIZED
  }

  static final int MAGIC = 0x5050_4652; // "PPFR"
  static final byte FORMAT_VERSION = 1;

  private final FrontSettings settings;
  private final DedupeWindow dedupe;
  private final Map<String, OpenBasket> open = new HashMap<>();
  private final PriorityQueue<Deadline> deadlines = new PriorityQueue<>();
  private long maxEventMillis = Long.MIN_VALUE;
  private long forcedCloses;

  public PartitionFront(FrontSettings settings) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.dedupe = new DedupeWindow(settings.dedupeHorizonMillis(), settings.dedupeMaxIds(), () -> maxEventMillis);
  }

  private static final class OpenBasket {
    final String id;
    final long firstMillis;
    long lastMillis;
    final ArrayList<String> items = new ArrayList<>(8);

    OpenBasket(String id, long firstMillis) {
      this.id = id;
      this.firstMillis = firstMillis;
      this.lastMillis = firstMillis;
    }

    long deadline(FrontSettings s) {
      return Math.min(saturatedAdd(lastMillis, s.lineGapMillis()), saturatedAdd(firstMillis, s.lineMaxAgeMillis()));
    }
  }

  private record Deadline(long atMillis, String id) implements Comparable<Deadline> {
    @Override
    public int compareTo(Deadline o) {
      int c = Long.compare(atMillis, o.atMillis);
      return c != 0 ? c : id.compareTo(o.id);
    }
  }

  /** Takes one decoded event; baskets that become complete go to {@code sink}. */
  public Outcome accept(BasketEvent event, BasketSink sink) {
    long t = event.eventMillis();
    if (t < watermarkMillis()) {
      return Outcome.LATE;
    }
    Outcome outcome;
    if (event instanceof Basket basket) {
      if (dedupe.seenBefore(basket.basketId(), t)) {
        return Outcome.DUPLICATE;
      }
      advance(t);
      sink.basket(basket.basketId(), t, basket.items(), basket.attributes());
      outcome = Outcome.ACCEPTED;
    } else {
      outcome = acceptLine((LineItem) event, sink);
      if (outcome != Outcome.ACCEPTED) {
        return outcome;
      }
    }
    closeDue(sink);
    return outcome;
  }

  private Outcome acceptLine(LineItem line, BasketSink sink) {
    String id = line.basketId();
    if (dedupe.contains(id)) {
      return Outcome.DUPLICATE;
    }
    OpenBasket basket = open.get(id);
    if (line.item() != null && basket != null && basket.items.size() >= settings.maxBasketItems()) {
      return Outcome.OVERSIZED;
    }
    advance(line.eventMillis());
    if (basket == null) {
      if (open.size() >= settings.maxOpenBaskets()) {
        closeEarliest(sink);
      }
      basket = new OpenBasket(id, line.eventMillis());
      open.put(id, basket);
    }
    if (line.eventMillis() > basket.lastMillis) {
      basket.lastMillis = line.eventMillis();
    }
    if (line.item() != null) {
      basket.items.add(line.item());
    }
    if (line.end()) {
      close(basket, sink);
    } else {
      deadlines.add(new Deadline(basket.deadline(settings), id));
    }
    return Outcome.ACCEPTED;
  }

  private void advance(long t) {
    if (t > maxEventMillis) {
      maxEventMillis = t;
    }
  }

  /** Closes every open basket whose deadline the watermark has passed. */
  private void closeDue(BasketSink sink) {
    long watermark = watermarkMillis();
    while (!deadlines.isEmpty() && deadlines.peek().atMillis() < watermark) {
      Deadline due = deadlines.poll();
      OpenBasket basket = open.get(due.id());
      if (basket != null && basket.deadline(settings) == due.atMillis()) {
        close(basket, sink);
      }
    }
  }

  private void closeEarliest(BasketSink sink) {
    while (!deadlines.isEmpty()) {
      Deadline due = deadlines.poll();
      OpenBasket basket = open.get(due.id());
      if (basket != null && basket.deadline(settings) == due.atMillis()) {
        forcedCloses++;
        close(basket, sink);
        return;
      }
    }
  }

  private void close(OpenBasket basket, BasketSink sink) {
    open.remove(basket.id);
    dedupe.remember(basket.id, basket.lastMillis);
    if (!basket.items.isEmpty()) {
      sink.basket(basket.id, basket.lastMillis, List.copyOf(basket.items));
    }
  }

  /** Closes every open basket (end of input, e.g. a file), oldest deadline first. */
  public void flush(BasketSink sink) {
    while (!open.isEmpty()) {
      closeEarliest(sink);
    }
    deadlines.clear();
  }

  /** Newest event time accepted; Long.MIN_VALUE before any. */
  public long maxEventMillis() {
    return maxEventMillis;
  }

  /** {@code maxEventMillis − allowedLatenessMillis}; Long.MIN_VALUE before any event. */
  public long watermarkMillis() {
    return maxEventMillis == Long.MIN_VALUE ? Long.MIN_VALUE : maxEventMillis - settings.allowedLatenessMillis();
  }

  /** Baskets being assembled from line items. */
  public int openBaskets() {
    return open.size();
  }

  /** Basket ids remembered for dedupe. */
  public long rememberedIds() {
    return dedupe.size();
  }

  /** Open baskets closed early because {@code maxOpenBaskets} was reached. */
  public long forcedCloses() {
    return forcedCloses;
  }

  public FrontSettings settings() {
    return settings;
  }

  // ---------------------------------------------------------------- checkpoint encoding

  /**
   * The front's state (a part of the partition checkpoint, whose container carries the checksum).
   *
   * <pre>
   * MAGIC int "PPFR", VERSION byte 1, maxEventMillis long, forcedCloses long,
   * ids int, per id {basketId utf, basketMillis long},
   * open int, per open basket {basketId utf, firstMillis long, lastMillis long, items int, per item {utf}}
   * </pre>
   */
  public byte[] encode() {
    try {
      ByteArrayOutputStream bytes = new ByteArrayOutputStream(1024);
      DataOutputStream out = new DataOutputStream(bytes);
      out.writeInt(MAGIC);
      out.writeByte(FORMAT_VERSION);
      out.writeLong(maxEventMillis);
      out.writeLong(forcedCloses);
      List<Map.Entry<String, Long>> ids = new ArrayList<>();
      dedupe.forEach((id, millis) -> ids.add(Map.entry(id, millis)));
      out.writeInt(ids.size());
      for (Map.Entry<String, Long> e : ids) {
        out.writeUTF(e.getKey());
        out.writeLong(e.getValue());
      }
      out.writeInt(open.size());
      for (OpenBasket basket : open.values()) {
        out.writeUTF(basket.id);
        out.writeLong(basket.firstMillis);
        out.writeLong(basket.lastMillis);
        out.writeInt(basket.items.size());
        for (String item : basket.items) {
          out.writeUTF(item);
        }
      }
      out.flush();
      return bytes.toByteArray();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** A front restored from {@link #encode}; throws {@link SnapshotFormatException} for unreadable bytes. */
  public static PartitionFront decode(byte[] encoded, FrontSettings settings) {
    PartitionFront front = new PartitionFront(settings);
    try {
      DataInputStream in = new DataInputStream(new ByteArrayInputStream(encoded));
      if (in.readInt() != MAGIC) {
        throw new SnapshotFormatException("not a partition front state (bad magic)");
      }
      byte version = in.readByte();
      if (version != FORMAT_VERSION) {
        throw new SnapshotFormatException("partition front format " + version + " is not supported; this build reads "
            + FORMAT_VERSION);
      }
      front.maxEventMillis = in.readLong();
      front.forcedCloses = in.readLong();
      int ids = in.readInt();
      for (int i = 0; i < ids; i++) {
        String id = in.readUTF();
        front.dedupe.remember(id, in.readLong());
      }
      int openCount = in.readInt();
      for (int i = 0; i < openCount; i++) {
        OpenBasket basket = new OpenBasket(in.readUTF(), in.readLong());
        basket.lastMillis = in.readLong();
        int items = in.readInt();
        for (int k = 0; k < items; k++) {
          basket.items.add(in.readUTF());
        }
        front.open.put(basket.id, basket);
        front.deadlines.add(new Deadline(basket.deadline(settings), basket.id));
      }
      if (in.available() != 0) {
        throw new SnapshotFormatException("partition front state has " + in.available() + " trailing bytes");
      }
      return front;
    } catch (IOException e) {
      throw new SnapshotFormatException("partition front state unreadable: " + e.getMessage(), e);
    }
  }

  static long saturatedAdd(long a, long b) {
    long sum = a + b;
    return ((a ^ sum) & (b ^ sum)) < 0 ? Long.MAX_VALUE : sum;
  }
}
