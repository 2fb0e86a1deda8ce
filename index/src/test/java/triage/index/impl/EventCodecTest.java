package triage.index.impl;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.TreeMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import org.apache.lucene.codecs.Codec;
import org.apache.lucene.codecs.CodecUtil;
import org.apache.lucene.document.BinaryPoint;
import org.apache.lucene.document.Document;
import org.apache.lucene.document.Field;
import org.apache.lucene.document.FloatPoint;
import org.apache.lucene.document.IntPoint;
import org.apache.lucene.document.LongPoint;
import org.apache.lucene.document.NumericDocValuesField;
import org.apache.lucene.document.StringField;
import org.apache.lucene.index.CheckIndex;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.NoMergePolicy;
import org.apache.lucene.index.SegmentCommitInfo;
import org.apache.lucene.index.SegmentInfos;
import org.apache.lucene.index.Term;
import org.apache.lucene.search.IndexSearcher;
import org.apache.lucene.search.Query;
import org.apache.lucene.search.Sort;
import org.apache.lucene.search.SortField;
import org.apache.lucene.store.FSDirectory;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The TriageEvent1 codec against Lucene's default codec: the point files byte for byte (without header and footer)
 * over extremes, ties, gaps, several values, other widths and dimensions, an index sort, deletes, failed documents and
 * many flushes; CheckIndex; range counts against a brute-force count with several indexing threads.
 */
class EventCodecTest {
  @TempDir
  Path dir;

  private static final float[] FLOATS = {0f, -0f, Float.MIN_VALUE, -Float.MIN_VALUE, Float.MAX_VALUE,
      -Float.MAX_VALUE, Float.POSITIVE_INFINITY, Float.NEGATIVE_INFINITY, Float.NaN, 1f, -1f};
  private static final long[] LONGS = {0, -1, 1, Long.MIN_VALUE, Long.MAX_VALUE, Long.MIN_VALUE + 1,
      Long.MAX_VALUE - 1, Integer.MIN_VALUE, Integer.MAX_VALUE};

  /** Adds documents with deletes, updates, failing documents, extremes, gaps, several values, other widths. */
  private static void fill(IndexWriter w, int n, long seed) throws IOException {
    SplittableRandom r = new SplittableRandom(seed);
    String immense = "x".repeat(40_000);
    for (int i = 0; i < n; i++) {
      Document doc = new Document();
      doc.add(new StringField("key", Integer.toString(i % 97), Field.Store.NO));
      doc.add(new NumericDocValuesField("sortkey", r.nextInt(1000)));
      if (r.nextInt(4) != 0) {
        doc.add(new FloatPoint("f", r.nextInt(3) == 0 ? FLOATS[r.nextInt(FLOATS.length)] : r.nextInt(20) - 10f));
      }
      doc.add(new LongPoint("l", r.nextInt(3) == 0 ? LONGS[r.nextInt(LONGS.length)] : r.nextLong()));
      doc.add(new LongPoint("same", 42));
      doc.add(new IntPoint("i", r.nextInt(5) - 2));
      int k = r.nextInt(3);
      for (int j = 0; j < k; j++) {
        doc.add(new FloatPoint("multi", r.nextInt(4)));
      }
      doc.add(new BinaryPoint("three", new byte[] {(byte) r.nextInt(), (byte) r.nextInt(), (byte) r.nextInt()}));
      doc.add(new FloatPoint("plane", r.nextInt(3), r.nextInt(3)));
      if (r.nextInt(50) == 0) {
        // a non-aborting failure after the points were buffered: the document is marked deleted
        doc.add(new StringField("big", immense, Field.Store.NO));
        try {
          w.addDocument(doc);
          throw new AssertionError("immense term accepted");
        } catch (IllegalArgumentException expected) {
          continue;
        }
      }
      if (r.nextInt(40) == 0) {
        w.updateDocument(new Term("key", Integer.toString(r.nextInt(97))), doc);
      } else {
        w.addDocument(doc);
      }
      if (r.nextInt(30) == 0) {
        w.deleteDocuments(new Term("key", Integer.toString(r.nextInt(97))));
      }
    }
  }

  private static void build(Path index, Codec codec, int n, int maxBuffered, boolean sorted) throws IOException {
    IndexWriterConfig c = new IndexWriterConfig().setCodec(codec).setMergePolicy(NoMergePolicy.INSTANCE)
        .setUseCompoundFile(false).setMaxBufferedDocs(maxBuffered)
        .setRAMBufferSizeMB(IndexWriterConfig.DISABLE_AUTO_FLUSH);
    if (sorted) {
      c.setIndexSort(new Sort(new SortField("sortkey", SortField.Type.LONG)));
    }
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, c)) {
      fill(w, n, 5);
      w.commit();
    }
  }

  /** Each point file of each segment, without its header (segment id) and footer (checksum). */
  private static Map<String, byte[]> pointFiles(Path index) throws IOException {
    Map<String, byte[]> out = new TreeMap<>();
    try (FSDirectory d = FSDirectory.open(index)) {
      for (SegmentCommitInfo s : SegmentInfos.readLatestCommit(d)) {
        String[][] kinds = {{"kdd", "Lucene90PointsFormatData"}, {"kdi", "Lucene90PointsFormatIndex"},
            {"kdm", "Lucene90PointsFormatMeta"}};
        for (String[] k : kinds) {
          byte[] all = Files.readAllBytes(index.resolve(s.info.name + "." + k[0]));
          int header = CodecUtil.indexHeaderLength(k[1], "");
          out.put(s.info.name + "." + k[0] + " maxDoc " + s.info.maxDoc() + " del " + s.getDelCount(),
              Arrays.copyOfRange(all, header, all.length - CodecUtil.footerLength()));
        }
      }
    }
    return out;
  }

  private static void checkIndex(Path index) throws IOException {
    try (FSDirectory d = FSDirectory.open(index); CheckIndex check = new CheckIndex(d)) {
      ByteArrayOutputStream log = new ByteArrayOutputStream();
      check.setInfoStream(new PrintStream(log, true, StandardCharsets.UTF_8));
      CheckIndex.Status status = check.checkIndex();
      assertTrue(status.clean, log.toString(StandardCharsets.UTF_8));
    }
  }

  @Test
  void pointFilesByteForByteLikeLucenes() throws IOException {
    int[][] cases = {{1, 2}, {3, 2}, {701, 50}, {600, 97}, {8_000, 8_000}, {3_000, 513}};
    for (int[] c : cases) {
      for (boolean sorted : new boolean[] {false, true}) {
        String name = c[0] + "-" + c[1] + "-" + sorted;
        Path lucene = dir.resolve("lucene-" + name);
        Path ours = dir.resolve("ours-" + name);
        build(lucene, Codec.getDefault(), c[0], c[1], sorted);
        build(ours, new EventCodec(), c[0], c[1], sorted);
        checkIndex(ours);
        Map<String, byte[]> a = pointFiles(lucene);
        Map<String, byte[]> b = pointFiles(ours);
        assertEquals(a.keySet(), b.keySet(), name);
        for (String f : a.keySet()) {
          assertArrayEquals(a.get(f), b.get(f), name + " " + f);
        }
      }
    }
  }

  /** Several indexing threads, small flushes, deletes: CheckIndex clean and range counts as a brute-force pass. */
  @Test
  void concurrentIndexingAnswersRangesExactly() throws Exception {
    Path index = dir.resolve("threads");
    int threads = 4;
    int perThread = 10_000;
    float[][] values = new float[threads][perThread];
    IndexWriterConfig c = new IndexWriterConfig().setCodec(new EventCodec()).setMergePolicy(NoMergePolicy.INSTANCE)
        .setRAMBufferSizeMB(1);
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, c)) {
      ExecutorService pool = Executors.newFixedThreadPool(threads);
      List<Future<?>> done = new ArrayList<>();
      for (int t = 0; t < threads; t++) {
        int thread = t;
        done.add(pool.submit(() -> {
          SplittableRandom r = new SplittableRandom(thread);
          for (int i = 0; i < perThread; i++) {
            float v = r.nextInt(10) == 0 ? FLOATS[r.nextInt(FLOATS.length)] : (float) r.nextGaussian();
            values[thread][i] = v;
            Document doc = new Document();
            doc.add(new FloatPoint("x", v));
            doc.add(new LongPoint("id", (long) thread * perThread + i));
            w.addDocument(doc);
            if (i % 2000 == 1999) {
              w.flush();
            }
          }
          return null;
        }));
      }
      for (Future<?> f : done) {
        f.get();
      }
      pool.shutdown();
      w.commit();
    }
    checkIndex(index);
    try (FSDirectory d = FSDirectory.open(index); DirectoryReader reader = DirectoryReader.open(d)) {
      assertTrue(reader.leaves().size() > 4, "segments: " + reader.leaves().size());
      IndexSearcher searcher = new IndexSearcher(reader);
      float[][] ranges = {{-0f, 0f}, {0f, 0f}, {-0f, -0f}, {Float.NEGATIVE_INFINITY, Float.POSITIVE_INFINITY},
          {-1f, 1f}, {Float.NaN, Float.NaN}, {Float.MAX_VALUE, Float.POSITIVE_INFINITY}};
      for (float[] range : ranges) {
        long expected = 0;
        for (float[] row : values) {
          for (float v : row) {
            if (Float.compare(v, range[0]) >= 0 && Float.compare(v, range[1]) <= 0) {
              expected++;
            }
          }
        }
        Query q = FloatPoint.newRangeQuery("x", range[0], range[1]);
        assertEquals(expected, searcher.count(q), Arrays.toString(range));
      }
      assertEquals(threads * perThread, searcher.count(LongPoint.newRangeQuery("id", Long.MIN_VALUE,
          Long.MAX_VALUE)));
    }
  }
}
