package triage.index.impl;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteOrder;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import triage.core.sample.Columns;
import triage.core.sample.EventBatch;
import triage.core.sample.SampleSpec;
import triage.core.sample.Variation;

/**
 * The fixed-length binary form of one event, kept as binary doc values (read by sums, histograms, column scans and
 * when fetching an event by id). All numbers are little-endian; doubles keep their raw IEEE-754 bits, so values
 * read back bit-exact.
 *
 * <pre>
 * offset  size       content
 * 0       4          sample ordinal (int)
 * 4       8          index-wide row number (long)
 * 12      8          input line (long)
 * 20      8          nominal weight (double)
 * 28      8 × F      features, in spec order (double)
 * …       16 × V     variation weights up, down, in spec order (double; NaN for samples without them)
 * …       8 × 3      id, run, block (long; 0 when absent)
 * …       8          external score (double), only when the spec names one
 * …       4 × C      category codes into the sample's value list in the manifest (int)
 * </pre>
 */
final class Layout {
  /** Reads longs from byte arrays. */
  static final VarHandle LONG = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);

  /** Reads ints from byte arrays. */
  static final VarHandle INT = MethodHandles.byteArrayViewVarHandle(int[].class, ByteOrder.LITTLE_ENDIAN);

  /** Offset of the sample ordinal. */
  static final int SAMPLE = 0;

  /** Offset of the row number. */
  static final int ROW = 4;

  /** Offset of the input line. */
  static final int LINE = 12;

  /** Offset of the weight. */
  static final int WEIGHT = 20;

  /** Offset of the first feature. */
  static final int FEATURES = 28;

  /** The kinds of slot. */
  enum Slot {
    /** A double. */
    DOUBLE,
    /** A long. */
    LONG,
    /** An int category code. */
    CODE
  }

  /** Where a named column lives. */
  record Place(int offset, Slot slot) {}

  /** Number of features. */
  final int features;

  /** Number of variations. */
  final int variations;

  /** Offset of the first variation weight. */
  final int variationAt;

  /** Offset of the id. */
  final int idAt;

  /** Offset of the run. */
  final int runAt;

  /** Offset of the block. */
  final int blockAt;

  /** Offset of the external score, or -1. */
  final int scoreAt;

  /** Offset of the first category code. */
  final int categoryAt;

  /** Number of categories. */
  final int categories;

  /** Bytes per event. */
  final int length;

  /** Places of named columns (features, variation weight columns, id, run, block, score, categories). */
  private final Map<String, Place> places = new HashMap<>();

  Layout(SampleSpec spec) {
    Columns c = spec.columns();
    features = c.features().size();
    variations = spec.variations().size();
    variationAt = FEATURES + 8 * features;
    idAt = variationAt + 16 * variations;
    runAt = idAt + 8;
    blockAt = runAt + 8;
    scoreAt = c.score() == null ? -1 : blockAt + 8;
    categoryAt = blockAt + 8 + (c.score() == null ? 0 : 8);
    categories = c.categories().size();
    length = categoryAt + 4 * categories;
    for (int k = 0; k < features; k++) {
      places.put(c.features().get(k), new Place(FEATURES + 8 * k, Slot.DOUBLE));
    }
    List<Variation> vs = spec.variations();
    for (int j = 0; j < vs.size(); j++) {
      places.put(vs.get(j).up(), new Place(variationAt + 16 * j, Slot.DOUBLE));
      places.put(vs.get(j).down(), new Place(variationAt + 16 * j + 8, Slot.DOUBLE));
    }
    places.put(c.id(), new Place(idAt, Slot.LONG));
    if (c.run() != null) {
      places.put(c.run(), new Place(runAt, Slot.LONG));
    }
    if (c.block() != null) {
      places.put(c.block(), new Place(blockAt, Slot.LONG));
    }
    if (c.score() != null) {
      places.put(c.score(), new Place(scoreAt, Slot.DOUBLE));
    }
    for (int k = 0; k < categories; k++) {
      places.put(c.categories().get(k), new Place(categoryAt + 4 * k, Slot.CODE));
    }
  }

  /** The place of a column, or null. */
  Place place(String column) {
    return places.get(column);
  }

  /** Writes event i of a batch into {@code out} (length {@link #length}). */
  void encode(EventBatch b, int i, int sample, long row, byte[] out) {
    INT.set(out, SAMPLE, sample);
    LONG.set(out, ROW, row);
    LONG.set(out, LINE, b.line(i));
    putDouble(out, WEIGHT, b.weight(i));
    for (int k = 0; k < features; k++) {
      putDouble(out, FEATURES + 8 * k, b.feature(i, k));
    }
    boolean varied = b.variationCount() == variations;
    for (int j = 0; j < variations; j++) {
      putDouble(out, variationAt + 16 * j, varied ? b.up(i, j) : Double.NaN);
      putDouble(out, variationAt + 16 * j + 8, varied ? b.down(i, j) : Double.NaN);
    }
    LONG.set(out, idAt, b.id(i));
    LONG.set(out, runAt, b.run(i));
    LONG.set(out, blockAt, b.block(i));
    if (scoreAt >= 0) {
      putDouble(out, scoreAt, b.score(i));
    }
    for (int k = 0; k < categories; k++) {
      INT.set(out, categoryAt + 4 * k, b.categoryCode(i, k));
    }
  }

  static void putDouble(byte[] out, int offset, double v) {
    LONG.set(out, offset, Double.doubleToRawLongBits(v));
  }

  static double getDouble(byte[] in, int offset) {
    return Double.longBitsToDouble((long) LONG.get(in, offset));
  }

  static long getLong(byte[] in, int offset) {
    return (long) LONG.get(in, offset);
  }

  static int getInt(byte[] in, int offset) {
    return (int) INT.get(in, offset);
  }

  /** The value at a place, as a double (longs converted; codes as their number). */
  static double value(byte[] in, int base, Place p) {
    return switch (p.slot()) {
      case DOUBLE -> getDouble(in, base + p.offset());
      case LONG -> (double) getLong(in, base + p.offset());
      case CODE -> getInt(in, base + p.offset());
    };
  }
}
