package triage.index;

/**
 * Sums over the selected events of one sample.
 *
 * @param sample the sample
 * @param count the number of events
 * @param sumOfWeights Σ w (the expected yield for a reference sample; the count for an observed one)
 * @param sumOfSquaredWeights Σ w², whose square root is the statistical error of Σ w
 * @param upSums Σ w_up per variation (empty for samples without variations)
 * @param downSums Σ w_down per variation
 */
public record SampleSums(String sample, long count, double sumOfWeights, double sumOfSquaredWeights,
    double[] upSums, double[] downSums) {
  /** Checks the count. */
  public SampleSums {
    if (count < 0) {
      throw new IllegalArgumentException("count " + count + " is negative");
    }
  }

  /** √Σw², the statistical error of Σ w from the finite size of the sample. */
  public double statisticalError() {
    return Math.sqrt(sumOfSquaredWeights);
  }
}
