package triage.core.region;

import triage.core.stats.NeumaierSum;

/**
 * A score-threshold scan in one pass: for thresholds c_k at the observed scores' quantiles from the median to the
 * top 1% ({@code q = 0.5 + 0.49 k/(steps − 1)}), the observed count and the reference yield ± √Σw² of f &gt; c_k.
 *
 * <p>Algorithm: the observed scores are sorted once; each reference event goes to the bucket of the number of
 * thresholds below its score (binary search), with compensated sums per bucket; the yield above threshold k is
 * the compensated sum of the buckets above it. Cost {@code O(n log n + N log steps)} instead of one pass over the
 * index per threshold.
 */
public final class ThresholdScan {
  private ThresholdScan() {
    // no instance
  }

  /**
   * One threshold.
   *
   * @param threshold c (the selection is f &gt; c)
   * @param observed observed events above it
   * @param expected Σw of the reference above it
   * @param expectedError √Σw²
   */
  public record Row(double threshold, long observed, double expected, double expectedError) {
    /**
     * Why this row can have no significance, or null when it can: no reference weight above the threshold
     * ({@code Σw² = 0}: nothing is expected, so any observed event is "infinitely" significant and no finite Z
     * means anything), or reference weights that sum to zero or less (negative weights).
     *
     * @return the reason, one phrase, or null
     */
    public String noSignificance() {
      if (!(expectedError > 0)) {
        return "no reference weight lies above the threshold, so nothing is expected there";
      }
      if (!(expected > 0)) {
        return "the reference weights above the threshold sum to zero or less (negative weights), not a positive yield";
      }
      return null;
    }
  }

  /**
   * The scan.
   *
   * @param observed the observed events' scores (not modified)
   * @param reference the reference events' scores
   * @param weights their weights
   * @param steps number of thresholds, at least 1
   * @return one row per threshold, ascending
   */
  public static Row[] scan(double[] observed, double[] reference, double[] weights, int steps) {
    if (steps < 1 || observed.length == 0 || reference.length != weights.length) {
      throw new IllegalArgumentException("the scan needs at least one step, one observed event and one weight per "
          + "reference event");
    }
    for (double x : observed) {
      if (!Double.isFinite(x)) {
        throw new IllegalArgumentException("observed scores must be finite, got " + x);
      }
    }
    for (double x : reference) {
      if (!Double.isFinite(x)) {
        throw new IllegalArgumentException("reference scores must be finite, got " + x);
      }
    }
    double[] f = observed.clone();
    java.util.Arrays.sort(f);
    double[] c = new double[steps];
    for (int k = 0; k < steps; k++) {
      double q = steps == 1 ? 0.5 : 0.5 + 0.49 * k / (steps - 1);
      c[k] = f[Math.min(f.length - 1, (int) (q * f.length))];
    }
    NeumaierSum[] bw = new NeumaierSum[steps + 1];
    NeumaierSum[] bw2 = new NeumaierSum[steps + 1];
    for (int j = 0; j <= steps; j++) {
      bw[j] = NeumaierSum.create();
      bw2[j] = NeumaierSum.create();
    }
    for (int i = 0; i < reference.length; i++) {
      // Bucket j: above exactly the j lowest thresholds.
      int j = countBelow(c, reference[i]);
      bw[j].add(weights[i]);
      bw2[j].add(weights[i] * weights[i]);
    }
    Row[] rows = new Row[steps];
    for (int k = 0; k < steps; k++) {
      NeumaierSum sw = NeumaierSum.create();
      NeumaierSum sw2 = NeumaierSum.create();
      for (int j = k + 1; j <= steps; j++) {
        sw.add(bw[j].value());
        sw2.add(bw2[j].value());
      }
      rows[k] = new Row(c[k], f.length - countAtMost(f, c[k]), sw.value(), Math.sqrt(sw2.value()));
    }
    return rows;
  }

  /** How many of the ascending values lie strictly below x. */
  static int countBelow(double[] ascending, double x) {
    int lo = 0;
    int hi = ascending.length;
    while (lo < hi) {
      int mid = (lo + hi) >>> 1;
      if (ascending[mid] < x) {
        lo = mid + 1;
      } else {
        hi = mid;
      }
    }
    return lo;
  }

  /** How many of the ascending values are at most x. */
  static int countAtMost(double[] ascending, double x) {
    int lo = 0;
    int hi = ascending.length;
    while (lo < hi) {
      int mid = (lo + hi) >>> 1;
      if (ascending[mid] <= x) {
        lo = mid + 1;
      } else {
        hi = mid;
      }
    }
    return lo;
  }
}
