package triage.index.impl;

import java.io.IOException;
import java.util.Arrays;
import java.util.List;
import org.apache.lucene.codecs.MutablePointTree;
import org.apache.lucene.codecs.PointsReader;
import org.apache.lucene.codecs.lucene90.Lucene90PointsWriter;
import org.apache.lucene.index.FieldInfo;
import org.apache.lucene.index.PointValues;
import org.apache.lucene.index.SegmentWriteState;
import org.apache.lucene.util.BytesRef;
import org.apache.lucene.util.IORunnable;
import org.apache.lucene.util.bkd.BKDConfig;
import org.apache.lucene.util.bkd.BKDWriter;

/**
 * Lucene's points writer with a faster flush for one-dimensional fields of 4 or 8 bytes.
 *
 * <p>At flush Lucene sorts a field's values in place (a most-significant-digit radix sort that swaps ordinals into
 * a byte pool) and then reads them in sorted order, one cache miss per value; with ten feature points per event
 * that was about half of the ingest's CPU (measured, see the contributor guide). Here the values are copied once,
 * in document order, into a {@code long} key per value (the value's bytes read as an unsigned big-endian number,
 * shifted to signed order) beside its document, sorted by a stable least-significant-digit radix sort (11 bits a
 * pass, passes whose digit is the same for every value skipped, so ids that arrive in order and run numbers cost
 * little), and handed in that order to Lucene's own one-dimensional tree writer, the one its merges use. Ties keep
 * document order, as Lucene's stable sort does, so the files are byte for byte Lucene's (tested on the trees read
 * back). Anything else (several dimensions, other widths, documents not in order) goes to Lucene's own path.
 *
 * <p>Memory: 24 bytes per value of the field being flushed, freed before the next field.
 */
final class SortedPointsWriter extends Lucene90PointsWriter {
  /** Values per leaf of the in-memory tree handed to the merge writer (its per-leaf buffers stay small). */
  private static final int LEAF = 4096;

  /** Bits per radix pass: 2,048 counters fit in the first-level cache. */
  private static final int RADIX_BITS = 11;

  /** The segment being written. */
  private final SegmentWriteState state;

  SortedPointsWriter(SegmentWriteState state) throws IOException {
    super(state);
    this.state = state;
  }

  @Override
  public void writeField(FieldInfo fieldInfo, PointsReader reader) throws IOException {
    PointValues.PointTree tree = reader.getValues(fieldInfo.name).getPointTree();
    int bytes = fieldInfo.getPointNumBytes();
    if (!(tree instanceof MutablePointTree values) || fieldInfo.getPointDimensionCount() != 1
        || fieldInfo.getPointIndexDimensionCount() != 1 || (bytes != 4 && bytes != 8)
        || tree.size() == 0 || tree.size() > Integer.MAX_VALUE - 8) {
      super.writeField(fieldInfo, reader);
      return;
    }
    int n = (int) tree.size();
    long[] keys = new long[n];
    int[] docs = new int[n];
    if (!read(values, bytes, keys, docs)) {
      super.writeField(fieldInfo, reader);
      return;
    }
    sort(keys, docs, bytes * 8);
    BKDConfig config = new BKDConfig(1, 1, bytes, BKDConfig.DEFAULT_MAX_POINTS_IN_LEAF_NODE);
    try (BKDWriter writer = new BKDWriter(state.segmentInfo.maxDoc(), state.directory, state.segmentInfo.name,
        config, BKDWriter.DEFAULT_MAX_MB_SORT_IN_HEAP, n)) {
      IORunnable finish = writer.merge(metaOut, indexOut, dataOut, null, List.of(new Sorted(keys, docs, bytes)));
      if (finish != null) {
        // as Lucene90PointsWriter.writeField does after its own writer
        metaOut.writeInt(fieldInfo.number);
        finish.run();
      }
    }
  }

  /**
   * Copies the values in their order (documents ascending, as the indexing chain adds them) into signed-order keys.
   *
   * @return false if the documents are not in ascending order (then Lucene's own path must tie-break)
   */
  static boolean read(MutablePointTree values, int bytes, long[] keys, int[] docs) {
    BytesRef v = new BytesRef();
    int previous = -1;
    for (int i = 0; i < keys.length; i++) {
      int doc = values.getDocID(i);
      if (doc < previous) {
        return false;
      }
      previous = doc;
      values.getValue(i, v);
      keys[i] = key(v.bytes, v.offset, bytes);
      docs[i] = doc;
    }
    return true;
  }

  /** The value's bytes as a number whose signed order is their unsigned lexicographic order. */
  static long key(byte[] b, int offset, int bytes) {
    long u = 0;
    for (int k = 0; k < bytes; k++) {
      u = (u << 8) | (b[offset + k] & 0xFF);
    }
    // u − 2^(bits−1): flipping the top bit of the unsigned number, then reading it as signed
    return bytes == 8 ? u ^ Long.MIN_VALUE : (int) (u ^ 0x8000_0000L);
  }

  /** Inverse of {@link #key}: the value's bytes. */
  static void bytes(long key, int bytes, byte[] out) {
    long u = bytes == 8 ? key ^ Long.MIN_VALUE : (key ^ 0x8000_0000L) & 0xFFFF_FFFFL;
    for (int k = bytes - 1; k >= 0; k--) {
      out[k] = (byte) u;
      u >>>= 8;
    }
  }

  /**
   * Sorts keys ascending (signed), carrying their documents, stably: a least-significant-digit radix sort over the
   * keys' unsigned form, skipping a pass where every key has the same digit, and none at all if already sorted.
   *
   * @param bits the keys' width, 32 or 64
   */
  static void sort(long[] keys, int[] docs, int bits) {
    int n = keys.length;
    boolean sorted = true;
    for (int i = 1; i < n && sorted; i++) {
      sorted = keys[i - 1] <= keys[i];
    }
    if (sorted) {
      return;
    }
    long flip = bits == 64 ? Long.MIN_VALUE : 0x8000_0000L;
    long mask = bits == 64 ? -1L : 0xFFFF_FFFFL;
    int[] count = new int[1 << RADIX_BITS];
    long[] fromKeys = keys;
    int[] fromDocs = docs;
    long[] toKeys = new long[n];
    int[] toDocs = new int[n];
    for (int shift = 0; shift < bits; shift += RADIX_BITS) {
      Arrays.fill(count, 0);
      for (int i = 0; i < n; i++) {
        count[digit(fromKeys[i], flip, mask, shift)]++;
      }
      if (count[digit(fromKeys[0], flip, mask, shift)] == n) {
        continue;
      }
      int start = 0;
      for (int c = 0; c < count.length; c++) {
        int size = count[c];
        count[c] = start;
        start += size;
      }
      for (int i = 0; i < n; i++) {
        int at = count[digit(fromKeys[i], flip, mask, shift)]++;
        toKeys[at] = fromKeys[i];
        toDocs[at] = fromDocs[i];
      }
      long[] k = fromKeys;
      fromKeys = toKeys;
      toKeys = k;
      int[] d = fromDocs;
      fromDocs = toDocs;
      toDocs = d;
    }
    if (fromKeys != keys) {
      System.arraycopy(fromKeys, 0, keys, 0, n);
      System.arraycopy(fromDocs, 0, docs, 0, n);
    }
  }

  /** The digit of a key's unsigned form at {@code shift}. */
  private static int digit(long key, long flip, long mask, int shift) {
    return (int) ((((key ^ flip) & mask) >>> shift) & ((1 << RADIX_BITS) - 1));
  }

  /** Sorted values as the point values the merge writer reads: a root with leaves of {@link #LEAF} values. */
  private static final class Sorted extends PointValues {
    /** Keys ascending. */
    private final long[] keys;
    /** The document of each key. */
    private final int[] docs;
    /** Bytes per value. */
    private final int bytes;

    Sorted(long[] keys, int[] docs, int bytes) {
      this.keys = keys;
      this.docs = docs;
      this.bytes = bytes;
    }

    @Override
    public PointTree getPointTree() {
      return new Tree(this, -1);
    }

    @Override
    public byte[] getMinPackedValue() {
      byte[] b = new byte[bytes];
      bytes(keys[0], bytes, b);
      return b;
    }

    @Override
    public byte[] getMaxPackedValue() {
      byte[] b = new byte[bytes];
      bytes(keys[keys.length - 1], bytes, b);
      return b;
    }

    @Override
    public int getNumDimensions() {
      return 1;
    }

    @Override
    public int getNumIndexDimensions() {
      return 1;
    }

    @Override
    public int getBytesPerDimension() {
      return bytes;
    }

    @Override
    public long size() {
      return keys.length;
    }

    @Override
    public int getDocCount() {
      // not read by the merge writer
      throw new UnsupportedOperationException();
    }
  }

  /** A cursor over {@link Sorted}: the root (leaf −1) or one leaf. */
  private static final class Tree implements PointValues.PointTree {
    /** The values. */
    private final Sorted values;
    /** The value's bytes, refilled per visit. */
    private final byte[] packed;
    /** The leaf the cursor is on, −1 for the root. */
    private int leaf;

    Tree(Sorted values, int leaf) {
      this.values = values;
      this.packed = new byte[values.bytes];
      this.leaf = leaf;
    }

    private int leaves() {
      return (values.keys.length + LEAF - 1) / LEAF;
    }

    @Override
    public PointValues.PointTree clone() {
      return new Tree(values, leaf);
    }

    @Override
    public boolean moveToChild() {
      if (leaf >= 0) {
        return false;
      }
      leaf = 0;
      return true;
    }

    @Override
    public boolean moveToSibling() {
      if (leaf < 0 || leaf + 1 >= leaves()) {
        return false;
      }
      leaf++;
      return true;
    }

    @Override
    public boolean moveToParent() {
      if (leaf < 0) {
        return false;
      }
      leaf = -1;
      return true;
    }

    @Override
    public byte[] getMinPackedValue() {
      return values.getMinPackedValue();
    }

    @Override
    public byte[] getMaxPackedValue() {
      return values.getMaxPackedValue();
    }

    @Override
    public long size() {
      return leaf < 0 ? values.keys.length : to() - from();
    }

    private int from() {
      return leaf < 0 ? 0 : leaf * LEAF;
    }

    private int to() {
      return leaf < 0 ? values.keys.length : Math.min(values.keys.length, (leaf + 1) * LEAF);
    }

    @Override
    public void visitDocIDs(PointValues.IntersectVisitor visitor) throws IOException {
      int from = from();
      int to = to();
      visitor.grow(to - from);
      for (int i = from; i < to; i++) {
        visitor.visit(values.docs[i]);
      }
    }

    @Override
    public void visitDocValues(PointValues.IntersectVisitor visitor) throws IOException {
      int from = from();
      int to = to();
      visitor.grow(to - from);
      for (int i = from; i < to; i++) {
        bytes(values.keys[i], values.bytes, packed);
        visitor.visit(values.docs[i], packed);
      }
    }
  }
}
