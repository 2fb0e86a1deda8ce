package triage.index.impl;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.lucene.codecs.Codec;
import org.apache.lucene.document.Document;
import org.apache.lucene.document.FloatPoint;
import org.apache.lucene.document.LongPoint;
import org.apache.lucene.document.StringField;
import org.apache.lucene.document.Field;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.LeafReaderContext;
import org.apache.lucene.index.NoMergePolicy;
import org.apache.lucene.index.PointValues;
import org.apache.lucene.index.SegmentReader;
import org.apache.lucene.store.FSDirectory;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The index's codec writes the same point trees as Lucene's default codec: every tree is read back through Lucene's
 * reader and compared node by node (bounds and sizes) and leaf by leaf (documents and values, in order). The
 * reference is Lucene's own flush path, so any difference in order, tie-breaking or encoding shows.
 */
class SortedPointsWriterTest {
  @TempDir
  Path dir;

  /** Fields of the documents: floats with ties, signs and −0.0, longs in order, few and random. */
  private static final List<String> FIELDS = List.of("gauss", "ties", "sparse", "wide", "id", "run", "random", "pair");

  private static void fill(IndexWriter w, int n, long seed) throws IOException {
    SplittableRandom r = new SplittableRandom(seed);
    float[] special = {0f, -0f, Float.MIN_VALUE, -Float.MIN_VALUE, Float.MAX_VALUE, -Float.MAX_VALUE,
        Float.POSITIVE_INFINITY, Float.NEGATIVE_INFINITY};
    for (int i = 0; i < n; i++) {
      Document doc = new Document();
      doc.add(new FloatPoint("gauss", (float) r.nextGaussian()));
      doc.add(new FloatPoint("ties", r.nextInt(5) - 2f));
      if (i % 3 != 0) {
        doc.add(new FloatPoint("sparse", i % 7 == 0 ? -0f : (float) (r.nextDouble() * 1e6)));
      }
      doc.add(new FloatPoint("wide", r.nextInt(10) == 0 ? special[r.nextInt(special.length)]
          : Float.intBitsToFloat(r.nextInt() & 0x7F7F_FFFF) * (r.nextBoolean() ? 1 : -1)));
      doc.add(new LongPoint("id", r.nextInt(10) == 0 ? -i : i));
      doc.add(new LongPoint("run", 1000 + r.nextInt(30)));
      doc.add(new LongPoint("random", r.nextLong()));
      // two values for one document, and a two-dimensional field that goes Lucene's own way
      doc.add(new FloatPoint("pair", (float) r.nextGaussian()));
      doc.add(new FloatPoint("pair", (float) r.nextGaussian()));
      doc.add(new FloatPoint("plane", (float) r.nextGaussian(), (float) r.nextGaussian()));
      doc.add(new StringField("s", Integer.toString(i % 4), Field.Store.NO));
      w.addDocument(doc);
    }
  }

  /** A digest of every point tree of the index, node by node and leaf by leaf, and the codec of each segment. */
  private static String digest(Path index, int n, Codec codec, double bufferMb) throws Exception {
    IndexWriterConfig c = new IndexWriterConfig().setCodec(codec).setMergePolicy(NoMergePolicy.INSTANCE);
    c.setRAMBufferSizeMB(bufferMb);
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, c)) {
      fill(w, n, 7);
      w.commit();
    }
    MessageDigest md = MessageDigest.getInstance("SHA-256");
    try (FSDirectory d = FSDirectory.open(index); DirectoryReader reader = DirectoryReader.open(d)) {
      assertTrue(reader.leaves().size() >= 1);
      for (LeafReaderContext leaf : reader.leaves()) {
        assertEquals(codec.getName(), ((SegmentReader) leaf.reader()).getSegmentInfo().info.getCodec().getName());
        List<String> fields = new ArrayList<>(FIELDS);
        fields.add("plane");
        for (String f : fields) {
          PointValues values = leaf.reader().getPointValues(f);
          if (values == null) {
            update(md, f + " absent");
            continue;
          }
          update(md, f + " " + values.size() + " " + values.getDocCount());
          md.update(values.getMinPackedValue());
          md.update(values.getMaxPackedValue());
          walk(values.getPointTree(), md);
        }
      }
    }
    return java.util.HexFormat.of().formatHex(md.digest());
  }

  private static void update(MessageDigest md, String s) {
    md.update(s.getBytes(StandardCharsets.UTF_8));
  }

  private static void walk(PointValues.PointTree t, MessageDigest md) throws IOException {
    md.update(t.getMinPackedValue());
    md.update(t.getMaxPackedValue());
    update(md, "n" + t.size());
    if (t.moveToChild()) {
      do {
        walk(t, md);
      } while (t.moveToSibling());
      t.moveToParent();
      return;
    }
    t.visitDocValues(new PointValues.IntersectVisitor() {
      @Override
      public void visit(int doc) {
        throw new AssertionError();
      }

      @Override
      public void visit(int doc, byte[] value) {
        update(md, "d" + doc);
        md.update(value);
      }

      @Override
      public PointValues.Relation compare(byte[] lo, byte[] hi) {
        return PointValues.Relation.CELL_CROSSES_QUERY;
      }
    });
  }

  @Test
  void sameTreesAsLucenesDefaultCodec() throws Exception {
    // one segment of 300,000 documents (several thousand leaves per field), then many small segments
    for (int[] c : new int[][] {{300_000, 256}, {20_000, 1}, {1, 16}, {700, 16}}) {
      String name = c[0] + "-" + c[1];
      String lucene = digest(dir.resolve("lucene-" + name), c[0], Codec.getDefault(), c[1]);
      String ours = digest(dir.resolve("ours-" + name), c[0], new EventCodec(), c[1]);
      assertEquals(lucene, ours, name);
    }
  }

  @Test
  void keysOrderAsUnsignedBytes() throws NoSuchAlgorithmException {
    SplittableRandom r = new SplittableRandom(3);
    for (int bytes : new int[] {4, 8}) {
      List<byte[]> values = new ArrayList<>();
      for (int i = 0; i < 5_000; i++) {
        byte[] b = new byte[bytes];
        for (int k = 0; k < bytes; k++) {
          // extremes of each byte often, to reach the sign and carry edges
          int pick = r.nextInt(4);
          b[k] = (byte) (pick == 0 ? 0 : pick == 1 ? 0xFF : pick == 2 ? 0x80 : r.nextInt(256));
        }
        values.add(b);
      }
      for (int i = 1; i < values.size(); i++) {
        byte[] a = values.get(i - 1);
        byte[] b = values.get(i);
        long ka = SortedPointsWriter.key(a, 0, bytes);
        long kb = SortedPointsWriter.key(b, 0, bytes);
        assertEquals(Integer.signum(Arrays.compareUnsigned(a, b)), Long.signum(Long.compare(ka, kb)));
        byte[] back = new byte[bytes];
        SortedPointsWriter.bytes(ka, bytes, back);
        assertArrayEquals(a, back);
      }
    }
  }

  @Test
  void sortIsStableAndMatchesAComparisonSort() {
    SplittableRandom r = new SplittableRandom(11);
    for (int bits : new int[] {32, 64}) {
      for (int n : new int[] {1, 2, 100, 50_000}) {
        for (int spread : new int[] {3, 1 << 20, 0}) {
          long[] keys = new long[n];
          int[] docs = new int[n];
          for (int i = 0; i < n; i++) {
            long v = spread == 0 ? r.nextLong() : r.nextInt(spread) - spread / 2;
            keys[i] = bits == 32 ? (int) v : v;
            docs[i] = i;
          }
          Integer[] order = new Integer[n];
          Arrays.setAll(order, i -> i);
          long[] original = keys.clone();
          Arrays.sort(order, Comparator.comparingLong((Integer i) -> original[i]).thenComparingInt(i -> i));
          SortedPointsWriter.sort(keys, docs, bits);
          for (int i = 0; i < n; i++) {
            assertEquals(order[i].intValue(), docs[i], "bits " + bits + " n " + n + " at " + i);
            assertEquals(original[order[i]], keys[i]);
          }
        }
      }
    }
  }
}
