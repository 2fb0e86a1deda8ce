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
   * The bin index of a value: 0 for underflow, bins + 1 for overflow, −1 for NaN (a value that is in no bin, such
   * as the variation weight of an observed event; callers leave it out). Values on the upper edge go to overflow.
   * The index ⌊(x − lo)/(hi − lo) · bins⌋ + 1 is corrected against the edges {@link #edge} themselves, so a value
   * exactly on an edge falls in the bin that starts there, as the printed edges say.
   */
  public static int binOf(double x, int bins, double lo, double hi) {
    if (Double.isNaN(x)) {
      return -1;
    }
    if (x < lo) {
      return 0;
    }
    if (x >= hi) {
      return bins + 1;
    }
    int k = Math.min(Math.max((int) ((x - lo) / (hi - lo) * bins), 0), bins - 1);
    if (k + 1 < bins && x >= edge(k + 1, bins, lo, hi)) {
      k++;
    } else if (k > 0 && x < edge(k, bins, lo, hi)) {
      k--;
    }
    return k + 1;
  }

  /** Edge number k (0 … bins) of the regular bins: lo + (hi − lo)·k/bins, and hi itself for k = bins. */
  public static double edge(int k, int bins, double lo, double hi) {
    return k == bins ? hi : lo + (hi - lo) * k / bins;
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
