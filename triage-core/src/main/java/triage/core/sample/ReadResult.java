package triage.core.sample;

import java.util.List;
import java.util.Map;

/**
 * What reading one sample file produced; the counts reconcile: {@code rowsRead == rowsAccepted + rowsRejected}.
 *
 * @param sample the sample's name
 * @param file the file read
 * @param sha256 SHA-256 of the file's bytes as stored (compressed or not)
 * @param compressed whether the file was gzip-compressed
 * @param delimiter the field delimiter used
 * @param rowsRead data rows read after the header
 * @param rowsAccepted rows that passed every check
 * @param rowsRejected rows set aside
 * @param rejectedByKind rejected rows by kind of problem
 * @param negativeWeights accepted events with a negative nominal weight
 * @param zeroWeights accepted events with a zero nominal weight
 * @param sumOfWeights Σ w over accepted events
 * @param sumOfSquaredWeights Σ w² over accepted events
 * @param featureMeans weighted mean of each feature over accepted events
 * @param featureSds weighted (population) standard deviation of each feature
 * @param ignoredColumns header columns not named in the spec (read but not kept)
 */
public record ReadResult(String sample, String file, String sha256, boolean compressed, char delimiter,
    long rowsRead, long rowsAccepted, long rowsRejected, Map<String, Long> rejectedByKind, long negativeWeights,
    long zeroWeights, double sumOfWeights, double sumOfSquaredWeights, double[] featureMeans, double[] featureSds,
    List<String> ignoredColumns) {

  /** Checks that the counts reconcile. */
  public ReadResult {
    if (rowsRead != rowsAccepted + rowsRejected) {
      throw new IllegalStateException("rows read " + rowsRead + " != accepted " + rowsAccepted + " + rejected "
          + rowsRejected);
    }
    rejectedByKind = Map.copyOf(rejectedByKind);
    ignoredColumns = List.copyOf(ignoredColumns);
  }
}
