package triage.core.calibration;

import java.util.Arrays;

/**
 * Sample quantiles of toy statistics.
 *
 * <p>Formula: for sorted values {@code x_(1) <= ... <= x_(n)} and probability q, {@code h = (n - 1) q},
 * {@code Q(q) = x_(floor h + 1) + (h - floor h) (x_(floor h + 2) - x_(floor h + 1))}: linear interpolation between
 * order statistics (the definition numbered 7 in the usual catalogue of sample quantiles, and the default of most
 * statistics packages).
 *
 * <ul>
 *   <li>one value: every quantile is that value;</li>
 *   <li>no values, a NaN value or q outside [0, 1]: {@link IllegalArgumentException}.</li>
 * </ul>
 */
public final class Quantiles {
  private Quantiles() {
    // no instance
  }

  /** The q-quantile of unsorted values (the array is not changed). */
  public static double of(double[] values, double q) {
    double[] s = values.clone();
    Arrays.sort(s);
    return sorted(s, q);
  }

  /** The q-quantile of values sorted ascending. */
  public static double sorted(double[] sorted, double q) {
    if (sorted.length == 0) {
      throw new IllegalArgumentException("no values to take a quantile of");
    }
    if (!(q >= 0 && q <= 1)) {
      throw new IllegalArgumentException("quantile probability " + q + " is not in [0, 1]");
    }
    for (double v : sorted) {
      if (Double.isNaN(v)) {
        throw new IllegalArgumentException("NaN among the values");
      }
    }
    double h = (sorted.length - 1) * q;
    int lo = (int) Math.floor(h);
    if (lo >= sorted.length - 1) {
      return sorted[sorted.length - 1];
    }
    return sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]);
  }
}
