package triage.index;

import java.io.IOException;
import java.nio.file.Path;
import java.util.function.Consumer;
import triage.core.sample.ReadOptions;
import triage.core.sample.SampleSpec;
import triage.index.impl.LuceneIngest;

/**
 * Reads every file of a sample spec into a new index, all or nothing: the index becomes visible only when every
 * file has been read and the counts reconcile; a run killed at any moment leaves the folder at its last good
 * commit (or with no index), and running it again finishes cleanly.
 */
public final class Ingest {
  private Ingest() {
    // no instance
  }

  /**
   * How to ingest.
   *
   * @param read bad-row and weight policies
   * @param replace whether an existing index in the folder may be replaced
   * @param rejectsFile where rejected rows are written (with skipping), or null for {@code DIR/rejects.csv}
   * @param threads indexing threads
   * @param ramBufferMb Lucene's in-memory buffer before a segment is flushed
   */
  public record Options(ReadOptions read, boolean replace, Path rejectsFile, int threads, double ramBufferMb) {
    /** Checks threads and buffer. */
    public Options {
      if (read == null) {
        throw new IllegalArgumentException("read options are required");
      }
      if (threads < 1) {
        throw new IllegalArgumentException("threads " + threads + " is not positive");
      }
      if (!(ramBufferMb >= 16)) {
        throw new IllegalArgumentException("RAM buffer " + ramBufferMb + " MB is below 16 MB");
      }
    }

    /** Strict reading, no replacing, two indexing threads, 256 MB buffer. */
    public static Options defaults() {
      return new Options(ReadOptions.strict(), false, null, 2, 256);
    }

    /** The same options with other read options. */
    public Options with(ReadOptions options) {
      return new Options(options, replace, rejectsFile, threads, ramBufferMb);
    }

    /** The same options allowing (or not) an existing index to be replaced. */
    public Options withReplace(boolean allow) {
      return new Options(read, allow, rejectsFile, threads, ramBufferMb);
    }

    /** The same options with another rejects file. */
    public Options withRejectsFile(Path file) {
      return new Options(read, replace, file, threads, ramBufferMb);
    }

    /** The same options with another RAM buffer (MB). */
    public Options withRamBufferMb(double mb) {
      return new Options(read, replace, rejectsFile, threads, mb);
    }

    /** The same options with another number of indexing threads. */
    public Options withThreads(int n) {
      return new Options(read, replace, rejectsFile, n, ramBufferMb);
    }
  }

  /**
   * Runs the ingest.
   *
   * @param spec the samples to read (files resolved)
   * @param dir the index folder (created when missing)
   * @param options policies
   * @param progress receives one line per step, or null
   * @throws triage.core.sample.InputException for bad input (with file, line and column) or an index in the way
   */
  public static IngestReport run(SampleSpec spec, Path dir, Options options, Consumer<String> progress)
      throws IOException {
    return LuceneIngest.run(spec, dir, options, progress == null ? s -> { } : progress);
  }
}
