package triage.index;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.RandomAccessFile;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.stream.Stream;
import org.apache.lucene.document.Document;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.store.FSDirectory;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Opening a missing, foreign, damaged or future-format index fails with a clear message, never a stack trace. */
class OpenErrorsTest {
  @TempDir
  Path dir;

  private static String openFails(Path index) {
    IndexException e = assertThrows(IndexException.class, () -> EventStore.open(index).close());
    assertTrue(e.getMessage().startsWith(index.toString()), e.getMessage());
    return e.getMessage();
  }

  @Test
  void missingAndEmptyFolders() throws IOException {
    assertTrue(openFails(dir.resolve("nothing")).contains("no index here"));
    Files.createDirectories(dir.resolve("empty"));
    assertTrue(openFails(dir.resolve("empty")).contains("no index here"));
    Files.writeString(dir.resolve("file"), "x");
    assertTrue(openFails(dir.resolve("file")).contains("not an index folder"));
  }

  @Test
  void foreignIndexWithoutManifest() throws IOException {
    Path index = dir.resolve("foreign");
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, new IndexWriterConfig())) {
      w.addDocument(new Document());
      w.commit();
    }
    assertTrue(openFails(index).contains("not written by triage"));
  }

  @Test
  void unknownFormatVersion() throws IOException {
    Path index = dir.resolve("future");
    TestSamples.write(dir.resolve("data"), 50, 5, 1, false);
    Ingest.run(TestSamples.spec(dir.resolve("data")), index, Ingest.Options.defaults(), null);
    String manifest = Files.readString(index.resolve("manifest.json")).replace(Manifest.FORMAT, "triage-index/9");
    IndexWriterConfig config = new IndexWriterConfig().setOpenMode(IndexWriterConfig.OpenMode.APPEND);
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, config)) {
      w.setLiveCommitData(Map.of("triage.manifest", manifest).entrySet());
      w.commit();
    }
    String message = openFails(index);
    assertTrue(message.contains("'triage-index/9' is not known to this version"), message);
  }

  /**
   * Format 1 differed only by a stored copy of each event's binary form, which is no longer read: an index whose
   * commit says format 1 opens and its events are fetched by id from the doc values.
   */
  @Test
  void formatOneStillOpens() throws IOException {
    Path index = dir.resolve("format1");
    TestSamples.write(dir.resolve("data"), 50, 5, 1, false);
    Ingest.run(TestSamples.spec(dir.resolve("data")), index, Ingest.Options.defaults(), null);
    String manifest = Files.readString(index.resolve("manifest.json")).replace(Manifest.FORMAT, "triage-index/1");
    IndexWriterConfig config = new IndexWriterConfig().setOpenMode(IndexWriterConfig.OpenMode.APPEND);
    try (FSDirectory d = FSDirectory.open(index); IndexWriter w = new IndexWriter(d, config)) {
      w.setLiveCommitData(Map.of("triage.manifest", manifest).entrySet());
      w.commit();
    }
    try (EventStore store = EventStore.open(index)) {
      assertEquals("triage-index/1", store.manifest().format());
      for (TestSamples.Row r : TestSamples.bruteForce(dir.resolve("data"))) {
        EventRecord e = store.event(r.sample(), r.id()).orElseThrow();
        assertEquals(Double.doubleToRawLongBits(r.x()[0]), Double.doubleToRawLongBits(e.numbers().get("a")));
        assertEquals(r.sector(), e.categories().get("sector"));
      }
    }
  }

  @Test
  void damagedSegmentFiles() throws IOException {
    Path index = dir.resolve("damaged");
    TestSamples.write(dir.resolve("data"), 500, 50, 2, false);
    Ingest.run(TestSamples.spec(dir.resolve("data")), index, Ingest.Options.defaults(), null);
    try (Stream<Path> files = Files.list(index)) {
      for (Path f : files.filter(p -> p.getFileName().toString().startsWith("segments_")).toList()) {
        try (RandomAccessFile raf = new RandomAccessFile(f.toFile(), "rw")) {
          raf.seek(raf.length() / 2);
          raf.write(new byte[] {0x55, 0x55, 0x55, 0x55});
        }
      }
    }
    String message = openFails(index);
    assertTrue(message.contains("damaged") || message.contains("no index here"), message);
  }
}
