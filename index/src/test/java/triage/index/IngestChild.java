package triage.index;

import java.nio.file.Path;
import triage.core.sample.ReadOptions;

/** A child JVM for the crash test: ingests the test samples in a folder, slowly enough to be killed midway. */
public final class IngestChild {
  private IngestChild() {}

  /** Arguments: data folder, index folder. */
  public static void main(String[] args) throws Exception {
    Path data = Path.of(args[0]);
    Path index = Path.of(args[1]);
    System.out.println("started");
    System.out.flush();
    Ingest.run(TestSamples.spec(data), index, new Ingest.Options(ReadOptions.strict().withBatchSize(512), true, null,
        1, 16), null);
    System.out.println("finished");
  }
}
