package triage.index;

import java.util.List;
import triage.core.sample.ReadResult;

/**
 * What an ingest did; the totals reconcile: {@code rowsRead == rowsIndexed + rowsRejected}.
 *
 * @param index the index folder
 * @param indexId the new index's id
 * @param samples per-sample reading results, in spec order
 * @param rowsRead data rows read over all files
 * @param rowsIndexed events written to the index
 * @param rowsRejected rows set aside
 * @param rejectsFile the file listing rejected rows, or null when none were rejected
 * @param seconds wall-clock time of the ingest
 */
public record IngestReport(String index, String indexId, List<ReadResult> samples, long rowsRead, long rowsIndexed,
    long rowsRejected, String rejectsFile, double seconds) {
  /** Checks that the totals reconcile. */
  public IngestReport {
    if (rowsRead != rowsIndexed + rowsRejected) {
      throw new IllegalStateException("rows read " + rowsRead + " != indexed " + rowsIndexed + " + rejected "
          + rowsRejected);
    }
    samples = List.copyOf(samples);
  }
}
