package triage.index;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Crash safety: a child JVM is killed (SIGKILL) while it ingests; the folder must then hold the last good commit
 * (or no index at all), and running the ingest again must finish cleanly with reconciled counts.
 */
class CrashSafetyTest {
  @TempDir
  Path dir;

  /** Starts the child and kills it once it has flushed a segment but before it commits. */
  private boolean killMidway(Path data, Path index) throws Exception {
    String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
    Process child = new ProcessBuilder(java, "-Xmx512m", "-cp", System.getProperty("java.class.path"),
        IngestChild.class.getName(), data.toString(), index.toString()).redirectErrorStream(true)
        .redirectOutput(dir.resolve("child.log").toFile()).start();
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
    boolean flushed = false;
    while (System.nanoTime() < deadline && child.isAlive()) {
      if (Files.isDirectory(index)) {
        try (Stream<Path> files = Files.list(index)) {
          flushed = files.anyMatch(f -> f.getFileName().toString().startsWith("_"));
        }
      }
      if (flushed) {
        break;
      }
      Thread.sleep(5);
    }
    boolean killedBeforeCommit = child.isAlive();
    child.destroyForcibly().waitFor(30, TimeUnit.SECONDS);
    String output = Files.readString(dir.resolve("child.log"));
    assertTrue(!output.contains("Exception"), output);
    return killedBeforeCommit && !output.contains("finished");
  }

  @Test
  void killedFirstIngestLeavesNoIndexAndRerunFinishes() throws Exception {
    Path data = dir.resolve("data");
    TestSamples.write(data, 150_000, 5_000, 5, false);
    Path index = dir.resolve("index");
    assertTrue(killMidway(data, index), "the child finished before it could be killed; make the data larger");
    IndexException e = assertThrows(IndexException.class, () -> EventStore.open(index));
    assertTrue(e.getMessage().contains("no index here"), e.getMessage());
    IngestReport again = Ingest.run(TestSamples.spec(data), index, Ingest.Options.defaults(), null);
    assertEquals(155_000, again.rowsIndexed());
    try (EventStore s = EventStore.open(index)) {
      assertEquals(155_000, s.manifest().totalEvents());
      assertEquals(155_000, s.sums(Selection.all()).stream().mapToLong(SampleSums::count).sum());
    }
  }

  @Test
  void killedReplaceKeepsThePreviousCommit() throws Exception {
    Path small = dir.resolve("small");
    TestSamples.write(small, 1_000, 100, 6, false);
    Path index = dir.resolve("index");
    IngestReport first = Ingest.run(TestSamples.spec(small), index, Ingest.Options.defaults(), null);
    Path big = dir.resolve("big");
    TestSamples.write(big, 150_000, 5_000, 7, false);
    assertTrue(killMidway(big, index), "the child finished before it could be killed; make the data larger");
    try (EventStore s = EventStore.open(index)) {
      assertEquals(first.indexId(), s.manifest().indexId());
      assertEquals(1_100, s.manifest().totalEvents());
      assertEquals(1_100, s.sums(Selection.all()).stream().mapToLong(SampleSums::count).sum());
    }
    IngestReport again = Ingest.run(TestSamples.spec(big), index, Ingest.Options.defaults().withReplace(true), null);
    assertEquals(155_000, again.rowsIndexed());
    try (EventStore s = EventStore.open(index)) {
      assertEquals(again.indexId(), s.manifest().indexId());
      assertEquals(List.of(150_000L, 5_000L), s.manifest().samples().stream().map(Manifest.Sample::events).toList());
    }
  }

  @Test
  void existingIndexIsNotReplacedWithoutAsking() throws IOException {
    Path small = dir.resolve("small");
    TestSamples.write(small, 100, 10, 8, false);
    Path index = dir.resolve("index");
    Ingest.run(TestSamples.spec(small), index, Ingest.Options.defaults(), null);
    IndexException e = assertThrows(IndexException.class,
        () -> Ingest.run(TestSamples.spec(small), index, Ingest.Options.defaults(), null));
    assertTrue(e.getMessage().contains("--replace"), e.getMessage());
  }
}
