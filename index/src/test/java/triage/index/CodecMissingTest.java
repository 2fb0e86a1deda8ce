package triage.index;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.lucene.codecs.Codec;
import org.apache.lucene.codecs.FilterCodec;
import org.apache.lucene.codecs.lucene103.Lucene103Codec;
import org.apache.lucene.index.CodecReader;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.FilterCodecReader;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.LeafReaderContext;
import org.apache.lucene.index.NoMergePolicy;
import org.apache.lucene.index.SegmentCommitInfo;
import org.apache.lucene.index.SegmentInfos;
import org.apache.lucene.store.FSDirectory;
import org.apache.lucene.util.Bits;
import org.apache.lucene.util.FixedBitSet;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** An index whose segments name a codec this installation lacks fails with a clear message, not a trace. */
class CodecMissingTest {
  @TempDir
  Path dir;

  /** A codec that is not registered as a service: what a reader without TriageEvent1 (or a later one) sees. */
  private static final class Unregistered extends FilterCodec {
    Unregistered() {
      super("TriageEvent9", new Lucene103Codec());
    }
  }

  @Test
  void segmentsOfAnUnknownCodec() throws IOException {
    Path index = dir.resolve("index");
    TestSamples.write(dir.resolve("data"), 300, 40, 1, false);
    Ingest.run(TestSamples.spec(dir.resolve("data")), index, Ingest.Options.defaults(), null);
    rewrite(index, index, new Unregistered(), 1, null);
    IndexException open = assertThrows(IndexException.class, () -> EventStore.open(index).close());
    assertTrue(open.getMessage().contains("TriageEvent9"), open.getMessage());
    IndexException replace = assertThrows(IndexException.class, () -> Ingest.run(
        TestSamples.spec(dir.resolve("data")), index, Ingest.Options.defaults().withReplace(true), null));
    assertTrue(replace.getMessage().contains("TriageEvent9"), replace.getMessage());
  }

  /**
   * Rewrites the documents of {@code from} into {@code to} as {@code pieces} segments of the given codec, keeping
   * the commit's user data (the manifest), with its format replaced when {@code format} is given.
   */
  static void rewrite(Path from, Path to, Codec codec, int pieces, String format) throws IOException {
    Path tmp = to.resolveSibling(to.getFileName() + ".tmp");
    Map<String, String> user;
    try (FSDirectory src = FSDirectory.open(from); DirectoryReader reader = DirectoryReader.open(src);
        FSDirectory dst = FSDirectory.open(tmp); IndexWriter w = new IndexWriter(dst,
            new IndexWriterConfig().setCodec(codec).setMergePolicy(NoMergePolicy.INSTANCE))) {
      user = new HashMap<>(reader.getIndexCommit().getUserData());
      if (format != null) {
        user.put("triage.manifest", user.get("triage.manifest").replace(Manifest.FORMAT, format));
      }
      for (LeafReaderContext leaf : reader.leaves()) {
        CodecReader r = (CodecReader) leaf.reader();
        int maxDoc = r.maxDoc();
        for (int p = 0; p < pieces; p++) {
          FixedBitSet live = new FixedBitSet(maxDoc);
          live.set((int) ((long) maxDoc * p / pieces), (int) ((long) maxDoc * (p + 1) / pieces));
          int n = live.cardinality();
          if (n == 0) {
            continue;
          }
          w.addIndexes(new FilterCodecReader(r) {
            @Override
            public Bits getLiveDocs() {
              return live;
            }

            @Override
            public int numDocs() {
              return n;
            }

            @Override
            public CacheHelper getCoreCacheHelper() {
              return null;
            }

            @Override
            public CacheHelper getReaderCacheHelper() {
              return null;
            }
          });
        }
      }
      w.setLiveCommitData(user.entrySet());
      w.commit();
    }
    // replace the index folder's Lucene files by the rewritten ones
    try (var files = Files.list(to)) {
      for (Path f : files.toList()) {
        if (Files.isRegularFile(f) && (f.getFileName().toString().startsWith("_")
            || f.getFileName().toString().startsWith("segments_"))) {
          Files.delete(f);
        }
      }
    }
    try (var files = Files.list(tmp)) {
      for (Path f : files.toList()) {
        if (!f.getFileName().toString().equals("write.lock")) {
          Files.move(f, to.resolve(f.getFileName()));
        }
      }
    }
  }

  /**
   * A format-2 index (Lucene's default codec, as the previous version wrote) of many small segments, extended with a
   * model by this version: its manifest still says format 2, so its segments must all remain of Lucene's codec, or
   * the version that wrote it can no longer open it.
   */
  @Test
  void addScoresKeepsAFormatTwoIndexReadableByThePreviousVersion() throws IOException {
    Path index = dir.resolve("format2");
    TestSamples.write(dir.resolve("data2"), 3_000, 400, 2, false);
    Ingest.run(TestSamples.spec(dir.resolve("data2")), index, Ingest.Options.defaults(), null);
    rewrite(index, index, Codec.getDefault(), 30, "triage-index/2");
    assertTrue(segments(index).size() >= 30, segments(index).toString());
    assertTrue(segments(index).stream().allMatch(s -> s.endsWith(" Lucene103")), segments(index).toString());
    try (EventStore store = EventStore.open(index)) {
      assertEquals("triage-index/2", store.manifest().format());
      store.addScores("m1", new double[(int) store.manifest().totalEvents()], null);
    }
    try (EventStore store = EventStore.open(index)) {
      assertEquals("triage-index/2", store.manifest().format());
    }
    List<String> after = segments(index);
    assertTrue(after.stream().allMatch(s -> s.endsWith(" Lucene103")),
        "format-2 index now holds segments the previous version cannot read: " + after);
  }

  private static List<String> segments(Path index) throws IOException {
    List<String> out = new ArrayList<>();
    try (FSDirectory d = FSDirectory.open(index)) {
      for (SegmentCommitInfo s : SegmentInfos.readLatestCommit(d)) {
        out.add(s.info.name + " " + s.info.getCodec().getName());
      }
    }
    return out;
  }
}
