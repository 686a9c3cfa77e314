package org.pairpulse.sketch.engine;

import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.EOFException;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.util.ArrayList;
import java.util.List;
import java.util.zip.CRC32C;
import org.pairpulse.sketch.cms.UpdateRule;
import org.pairpulse.sketch.horizon.HorizonKind;
import org.pairpulse.sketch.horizon.HorizonSpec;
import org.pairpulse.sketch.snapshot.PayloadCheck;
import org.pairpulse.sketch.snapshot.SnapshotFormatException;
import org.pairpulse.sketch.stats.SizeClasses;

/**
 * The binary snapshot of a {@link PairEngine}: versioned, checksummed, self-describing.
 *
 * <pre>
 * offset  bytes  field
 * ------  -----  -----------------------------------------------------------------
 *   0       4    MAGIC          0x50 0x50 0x53 0x4E ("PPSN")
 *   4       1    FORMAT_VERSION 4 (1 to 3 are still read, see below)
 *   5       3    reserved       0
 *   8       8    PAYLOAD_BYTES  length L of the payload (big-endian)
 *  16       4    PAYLOAD_CRC    CRC32C of the payload
 *  20       4    reserved       0
 *  24       L    payload        (java.io.DataOutput encoding, big-endian)
 *
 * payload:
 *   config    horizonCount:int, per horizon {name:utf, kind:byte, lengthMillis:long, paneCount:int,
 *             halfLifeMillis:long}, burstHorizon:utf, trackingHalfLifeMillis:long, itemEpsilon, itemDelta, pairEpsilon,
 *             pairDelta, decayPairEpsilon:double, trackedPairCapacity, trackedItemCapacity, maxPairsPerBasket:int,
 *             updateRule:byte, seed:long, sizeClasses {count:int, lowerBound:int[count]}, pairRanking:byte
 *   counters  watermarkMillis, baskets, pairUpdates, expiredWindowUpdates, cappedBaskets,
 *             pairsSkippedByCap:long
 *   horizons  per horizon {newestPane:long, landmarkMillis:long, per pane {paneOfSlot:long,
 *             basketWeight:double, unclassedBaskets:double, classBaskets:double[classes],
 *             classItems:double[classes], classPairSlots:double[classes], classWeightedSlots:double[classes],
 *             item sketch {total:double, counters:double[width*depth]},
 *             pair sketch {same}}}
 *   pair rank sketch {total:double, counters:double[width*depth]} (see {@link PairRanking})
 *   tables    items then pairs, each {size:int, admissions, evictions, rejections:long, per slot
 *             {key:long, labelA:nullable-utf, labelB:nullable-utf, hashA, hashB, admittedAtMillis:long,
 *             panes:int[window panes], decays:double[decays], admissionPane:long[windows], admissionError:double[decays],
 *             admissionBias:double[horizons], items only: classPanes:int[window panes * classes],
 *             classDecays:double[decays * classes], rank:double}}
 *   (horizons here include the internal tracking decay, written last)
 * </pre>
 *
 * <h2>Format 3</h2>
 * The same without the pair ranking, the pair rank sketch and the slots' ranks (pairs were ranked by their counts). It
 * reads into an engine with the default ranking ({@link PairRanking#FRACTIONAL}): the rank sketch starts as a copy of
 * the tracking decay's pair sketch and each slot's rank as its tracking count. A count is at least the fractional rank
 * weight, so these are upper bounds, which is all Space-Saving needs; the restored ranks are high for a while, and
 * fade with the tracking decay.
 *
 * <h2>Format 2</h2>
 * The same without classWeightedSlots (Q_c, the pair slots times the pair cap's step). It is read with Q_c = K_c, as
 * if no basket had been above the pair cap (Σw² = Σw: the pair counts' dispersion is 1) until the restored panes
 * leave (windows) or decay (decays); baskets counted after the restore carry their steps.
 *
 * <h2>Format 1</h2>
 * The same without basket-size classes: no sizeClasses in the configuration, no unclassedBaskets,
 * classBaskets, classItems and classPairSlots per pane, no class cells in the item table. It reads into an engine with the
 * default size classes ({@link org.pairpulse.sketch.stats.SizeClasses#defaults()}, so that a checkpoint written
 * before classes restores under the default configuration) whose restored baskets are unclassed and whose tracked
 * items' restored counts have no class: a horizon publishes textbook measures until its unclassed share of N falls
 * under 1% (windows: once the restored panes have left; decays: as they decay), see {@code SizeStrata}.
 *
 * A reader checks magic, version, length and checksum before it parses anything, and builds a new
 * engine: a bad snapshot gives a {@link SnapshotFormatException} and never a half-loaded state.
 */
public final class Snapshots {
  static final int MAGIC = 0x5050_534E;
  static final byte FORMAT_VERSION = 4;
  /** The format before the pair ranking (pairs ranked by count), still read. */
  static final byte FORMAT_VERSION_3 = 3;
  /** The format before the pair-cap steps per size class (Q_c), still read. */
  static final byte FORMAT_VERSION_2 = 2;
  /** The format before basket-size classes, still read. */
  static final byte FORMAT_VERSION_1 = 1;
  static final int OFFSET_VERSION = 4;
  static final int OFFSET_PAYLOAD_BYTES = 8;
  static final int OFFSET_CRC = 16;
  static final int HEADER_BYTES = 24;

  private Snapshots() {}

  /** The snapshot of {@code engine}. Writer thread only. */
  public static byte[] write(PairEngine engine) {
    try {
      ByteArrayOutputStream bytes = new ByteArrayOutputStream(1 << 16);
      DataOutputStream out = new DataOutputStream(bytes);
      writeConfig(out, engine.config());
      out.writeLong(engine.watermarkMillis);
      out.writeLong(engine.baskets);
      out.writeLong(engine.pairUpdates);
      out.writeLong(engine.expiredWindowUpdates);
      out.writeLong(engine.sampling().cappedBaskets());
      out.writeLong(engine.sampling().skippedPairs());
      for (HorizonState state : engine.horizons) {
        out.writeLong(state.newestPane);
        out.writeLong(state.landmarkMillis);
        for (int p = 0; p < state.paneCount; p++) {
          out.writeLong(state.paneOfSlot[p]);
          out.writeDouble(state.basketWeight[p]);
          out.writeDouble(state.unclassedBaskets[p]);
          for (int c = 0; c < state.classCount; c++) {
            out.writeDouble(state.classBaskets[p * state.classCount + c]);
          }
          for (int c = 0; c < state.classCount; c++) {
            out.writeDouble(state.classItems[p * state.classCount + c]);
          }
          for (int c = 0; c < state.classCount; c++) {
            out.writeDouble(state.classPairSlots[p * state.classCount + c]);
          }
          for (int c = 0; c < state.classCount; c++) {
            out.writeDouble(state.classWeightedSlots[p * state.classCount + c]);
          }
          state.itemSketch[p].writeCounters(out);
          state.pairSketch[p].writeCounters(out);
        }
      }
      engine.pairRankSketch.writeCounters(out);
      writeTable(out, engine.items);
      writeTable(out, engine.pairs);
      out.flush();
      byte[] payload = bytes.toByteArray();
      CRC32C crc = new CRC32C();
      crc.update(payload);
      ByteBuffer result = ByteBuffer.allocate(HEADER_BYTES + payload.length);
      result.putInt(MAGIC).put(FORMAT_VERSION).put(new byte[3]).putLong(payload.length)
          .putInt((int) crc.getValue()).putInt(0).put(payload);
      return result.array();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** A new engine from a snapshot; throws {@link SnapshotFormatException} for anything unreadable. */
  public static PairEngine read(byte[] snapshot) {
    if (snapshot == null || snapshot.length < HEADER_BYTES) {
      throw new SnapshotFormatException("snapshot truncated: " + (snapshot == null ? 0 : snapshot.length)
          + " bytes, the header alone has " + HEADER_BYTES);
    }
    ByteBuffer header = ByteBuffer.wrap(snapshot, 0, HEADER_BYTES);
    int magic = header.getInt();
    if (magic != MAGIC) {
      throw new SnapshotFormatException(String.format("not a pairpulse snapshot (magic 0x%08X, expected 0x%08X)", magic, MAGIC));
    }
    byte version = snapshot[OFFSET_VERSION];
    if (version < FORMAT_VERSION_1 || version > FORMAT_VERSION) {
      throw new SnapshotFormatException("snapshot format version " + version + " is not supported; this build reads versions "
          + FORMAT_VERSION_1 + " to " + FORMAT_VERSION);
    }
    boolean classed = version != FORMAT_VERSION_1;
    boolean weightedSlots = version >= FORMAT_VERSION_3;
    boolean ranked = version >= FORMAT_VERSION;
    PayloadCheck.check("snapshot", snapshot, HEADER_BYTES, header.getLong(OFFSET_PAYLOAD_BYTES), header.getInt(OFFSET_CRC));
    try {
      DataInputStream in = new DataInputStream(new ByteArrayInputStream(snapshot, HEADER_BYTES, snapshot.length - HEADER_BYTES));
      PairEngine engine = new PairEngine(readConfig(in, version));
      engine.watermarkMillis = in.readLong();
      engine.baskets = in.readLong();
      engine.pairUpdates = in.readLong();
      engine.expiredWindowUpdates = in.readLong();
      engine.sampling().restore(in.readLong(), in.readLong());
      for (HorizonState state : engine.horizons) {
        state.newestPane = in.readLong();
        state.landmarkMillis = in.readLong();
        for (int p = 0; p < state.paneCount; p++) {
          state.paneOfSlot[p] = in.readLong();
          state.basketWeight[p] = in.readDouble();
          if (classed) {
            state.unclassedBaskets[p] = in.readDouble();
            for (int c = 0; c < state.classCount; c++) {
              state.classBaskets[p * state.classCount + c] = in.readDouble();
            }
            for (int c = 0; c < state.classCount; c++) {
              state.classItems[p * state.classCount + c] = in.readDouble();
            }
            for (int c = 0; c < state.classCount; c++) {
              state.classPairSlots[p * state.classCount + c] = in.readDouble();
            }
            for (int c = 0; c < state.classCount; c++) { // format 2: as if every basket was under the pair cap
              int cell = p * state.classCount + c;
              state.classWeightedSlots[cell] = weightedSlots ? in.readDouble() : state.classPairSlots[cell];
            }
          } else {
            state.unclassedBaskets[p] = state.basketWeight[p];
          }
          state.itemSketch[p].readCounters(in);
          state.pairSketch[p].readCounters(in);
        }
      }
      if (ranked) {
        engine.pairRankSketch.readCounters(in);
      } else { // format 3 and before: counts were the ranks (upper bounds of the fractional ones)
        engine.pairRankSketch.merge(engine.horizons[engine.trackingHorizon].pairSketch[0]);
      }
      readTable(in, engine.items, classed, ranked);
      readTable(in, engine.pairs, classed, ranked);
      if (in.available() != 0) {
        throw new SnapshotFormatException("snapshot has " + in.available() + " unread bytes after the state");
      }
      return engine;
    } catch (EOFException e) {
      throw new SnapshotFormatException("snapshot payload ends early", e);
    } catch (IOException | IllegalArgumentException e) {
      throw new SnapshotFormatException("snapshot payload unreadable: " + e.getMessage(), e);
    }
  }

  /** Reads the configuration a snapshot was written with, without loading its state. */
  public static EngineConfig configOf(byte[] snapshot) {
    read(snapshot); // validates fully first
    try {
      return readConfig(new DataInputStream(new ByteArrayInputStream(snapshot, HEADER_BYTES, snapshot.length - HEADER_BYTES)),
          snapshot[OFFSET_VERSION]);
    } catch (IOException e) {
      throw new SnapshotFormatException("snapshot configuration unreadable", e);
    }
  }

  private static void writeConfig(DataOutputStream out, EngineConfig config) throws IOException {
    out.writeInt(config.horizons().size());
    for (HorizonSpec spec : config.horizons()) {
      out.writeUTF(spec.name());
      out.writeByte(spec.kind().ordinal());
      out.writeLong(spec.lengthMillis());
      out.writeInt(spec.paneCount());
      out.writeLong(spec.halfLifeMillis());
    }
    out.writeUTF(config.burstHorizon());
    out.writeLong(config.trackingHalfLifeMillis());
    out.writeDouble(config.itemEpsilon());
    out.writeDouble(config.itemDelta());
    out.writeDouble(config.pairEpsilon());
    out.writeDouble(config.pairDelta());
    out.writeDouble(config.decayPairEpsilon());
    out.writeInt(config.trackedPairCapacity());
    out.writeInt(config.trackedItemCapacity());
    out.writeInt(config.maxPairsPerBasket());
    out.writeByte(config.updateRule().ordinal());
    out.writeLong(config.seed());
    SizeClasses classes = config.sizeClasses();
    out.writeInt(classes.count());
    for (int c = 0; c < classes.count(); c++) {
      out.writeInt(classes.lowerBound(c));
    }
    out.writeByte(config.pairRanking().ordinal());
  }

  private static EngineConfig readConfig(DataInputStream in, byte version) throws IOException {
    boolean classed = version != FORMAT_VERSION_1;
    int count = in.readInt();
    if (count < 1 || count > 64) {
      throw new SnapshotFormatException("snapshot names " + count + " horizons");
    }
    List<HorizonSpec> horizons = new ArrayList<>();
    for (int i = 0; i < count; i++) {
      String name = in.readUTF();
      int kind = in.readByte();
      if (kind < 0 || kind >= HorizonKind.values().length) {
        throw new SnapshotFormatException("snapshot horizon '" + name + "' has unknown kind " + kind);
      }
      horizons.add(new HorizonSpec(name, HorizonKind.values()[kind], in.readLong(), in.readInt(), in.readLong()));
    }
    String burst = in.readUTF();
    long trackingHalfLifeMillis = in.readLong();
    double itemEpsilon = in.readDouble();
    double itemDelta = in.readDouble();
    double pairEpsilon = in.readDouble();
    double pairDelta = in.readDouble();
    double decayPairEpsilon = in.readDouble();
    int pairCapacity = in.readInt();
    int itemCapacity = in.readInt();
    int maxPairs = in.readInt();
    int rule = in.readByte();
    if (rule < 0 || rule >= UpdateRule.values().length) {
      throw new SnapshotFormatException("snapshot has unknown update rule " + rule);
    }
    long seed = in.readLong();
    SizeClasses classes = SizeClasses.defaults();
    if (classed) {
      int classCount = in.readInt();
      if (classCount < 1 || classCount > SizeClasses.MAX_CLASSES) {
        throw new SnapshotFormatException("snapshot names " + classCount + " basket-size classes");
      }
      int[] bounds = new int[classCount];
      for (int c = 0; c < classCount; c++) {
        bounds[c] = in.readInt();
      }
      classes = SizeClasses.of(bounds);
    }
    PairRanking ranking = PairRanking.FRACTIONAL; // format 3 and before: read into the default (see the class comment)
    if (version >= FORMAT_VERSION) {
      int ordinal = in.readByte();
      if (ordinal < 0 || ordinal >= PairRanking.values().length) {
        throw new SnapshotFormatException("snapshot has unknown pair ranking " + ordinal);
      }
      ranking = PairRanking.values()[ordinal];
    }
    return new EngineConfig(horizons, burst, trackingHalfLifeMillis, itemEpsilon, itemDelta, pairEpsilon, pairDelta,
        decayPairEpsilon, pairCapacity, itemCapacity, maxPairs, UpdateRule.values()[rule], seed, classes, ranking);
  }

  private static void writeTable(DataOutputStream out, TrackedTable table) throws IOException {
    out.writeInt(table.size());
    out.writeLong(table.admissions);
    out.writeLong(table.evictions);
    out.writeLong(table.rejections);
    for (int s = 0; s < table.size(); s++) {
      out.writeLong(table.keys[s]);
      writeNullable(out, table.labelA[s]);
      writeNullable(out, table.labelB[s]);
      out.writeLong(table.hashA[s]);
      out.writeLong(table.hashB[s]);
      out.writeLong(table.admittedAtMillis[s]);
      for (int c = 0; c < table.paneCells; c++) {
        out.writeInt(table.panes[table.paneIndex(s, c)]);
      }
      for (int d = 0; d < table.decayCount; d++) {
        out.writeDouble(table.decays[table.decayIndex(s, d)]);
      }
      for (int w = 0; w < table.windowCount; w++) {
        out.writeLong(table.admissionPane[s * table.windowCount + w]);
      }
      for (int d = 0; d < table.decayCount; d++) {
        out.writeDouble(table.admissionError[s * table.decayCount + d]);
      }
      for (int h = 0; h < table.horizonCount; h++) {
        out.writeDouble(table.admissionBias[s * table.horizonCount + h]);
      }
      for (int c = 0; table.classCount > 0 && c < table.paneCells; c++) {
        for (int k = 0; k < table.classCount; k++) {
          out.writeInt(table.classPanes[table.classPaneIndex(s, c, k)]);
        }
      }
      for (int d = 0; table.classCount > 0 && d < table.decayCount; d++) {
        for (int k = 0; k < table.classCount; k++) {
          out.writeDouble(table.classDecays[table.classDecayIndex(s, d, k)]);
        }
      }
      out.writeDouble(table.rank[s]);
    }
  }

  private static void readTable(DataInputStream in, TrackedTable table, boolean classed, boolean ranked)
      throws IOException {
    int size = in.readInt();
    if (size < 0 || size > table.capacity) {
      throw new SnapshotFormatException("snapshot table holds " + size + " keys, capacity is " + table.capacity);
    }
    table.admissions = in.readLong();
    table.evictions = in.readLong();
    table.rejections = in.readLong();
    for (int s = 0; s < size; s++) {
      table.keys[s] = in.readLong();
      table.labelA[s] = readNullable(in);
      table.labelB[s] = readNullable(in);
      table.hashA[s] = in.readLong();
      table.hashB[s] = in.readLong();
      table.admittedAtMillis[s] = in.readLong();
      for (int c = 0; c < table.paneCells; c++) {
        table.panes[table.paneIndex(s, c)] = in.readInt();
      }
      for (int d = 0; d < table.decayCount; d++) {
        table.decays[table.decayIndex(s, d)] = in.readDouble();
      }
      for (int w = 0; w < table.windowCount; w++) {
        table.admissionPane[s * table.windowCount + w] = in.readLong();
      }
      for (int d = 0; d < table.decayCount; d++) {
        table.admissionError[s * table.decayCount + d] = in.readDouble();
      }
      for (int h = 0; h < table.horizonCount; h++) {
        table.admissionBias[s * table.horizonCount + h] = in.readDouble();
      }
      for (int c = 0; classed && table.classCount > 0 && c < table.paneCells; c++) {
        for (int k = 0; k < table.classCount; k++) {
          table.classPanes[table.classPaneIndex(s, c, k)] = in.readInt();
        }
      }
      for (int d = 0; classed && table.classCount > 0 && d < table.decayCount; d++) {
        for (int k = 0; k < table.classCount; k++) {
          table.classDecays[table.classDecayIndex(s, d, k)] = in.readDouble();
        }
      }
      table.rank[s] = ranked ? in.readDouble() : table.decays[table.decayIndex(s, table.trackingDecay)];
    }
    table.rebuild(size);
  }

  private static void writeNullable(DataOutputStream out, String value) throws IOException {
    out.writeBoolean(value != null);
    if (value != null) {
      out.writeUTF(value);
    }
  }

  private static String readNullable(DataInputStream in) throws IOException {
    return in.readBoolean() ? in.readUTF() : null;
  }
}
