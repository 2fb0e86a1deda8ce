package triage.index;

/**
 * A weighted histogram of one column for one sample: {@code bins} equal bins on [lo, hi) plus underflow
 * (index 0, x &lt; lo) and overflow (index bins + 1, x ≥ hi). Bin i (1 … bins) holds
 * lo + (i − 1)·width ≤ x &lt; lo + i·width, with width = (hi − lo)/bins.
 *
 * @param sample the sample
 * @param column the column
 * @param bins the number of regular bins
 * @param lo the lower edge
 * @param hi the upper edge
 * @param counts events per bin, length bins + 2
 * @param sumOfWeights Σ w per bin
 * @param sumOfSquaredWeights Σ w² per bin
 */
public record Histogram(String sample, String column, int bins, double lo, double hi, long[] counts,
    double[] sumOfWeights, double[] sumOfSquaredWeights) {
  /** Checks the binning and array lengths. */
  public Histogram {
    if (bins < 1) {
      throw new IllegalArgumentException("bins " + bins + " is not positive");
    }
    if (!(lo < hi) || !Double.isFinite(lo) || !Double.isFinite(hi)) {
      throw new IllegalArgumentException("histogram range [" + lo + ", " + hi + ") is not a finite interval");
    }
    if (counts.length != bins + 2 || sumOfWeights.length != bins + 2 || sumOfSquaredWeights.length != bins + 2) {
      throw new IllegalArgumentException("histogram arrays must have bins + 2 = " + (bins + 2) + " entries");
    }
  }

  /**
   * The bin index of a value: 0 for underflow, bins + 1 for overflow. Values on the upper edge go to overflow;
   * the index is computed as ⌊(x − lo)/(hi − lo) · bins⌋ + 1 and clamped to the regular bins, so rounding near
   * an inner edge can move a value by at most one bin, the same way for every caller.
   */
  public static int binOf(double x, int bins, double lo, double hi) {
    if (x < lo) {
      return 0;
    }
    if (x >= hi) {
      return bins + 1;
    }
    int b = (int) ((x - lo) / (hi - lo) * bins) + 1;
    return Math.min(Math.max(b, 1), bins);
  }

  /** The total count including under- and overflow. */
  public long total() {
    long n = 0;
    for (long c : counts) {
      n += c;
    }
    return n;
  }
}
