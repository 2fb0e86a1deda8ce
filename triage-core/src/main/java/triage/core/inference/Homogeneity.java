package triage.core.inference;

/**
 * Whether observed/expected is the same in every group (runs, detector sectors, triggers): the χ² homogeneity
 * statistic of counts n_i against expected yields b_i known to ±σ_i, with the common ratio r = Σn/Σb over the
 * groups with b_i &gt; 0 fitted.
 *
 * <p>Formula: χ² = Σ_i (n_i − r b_i)² / (r b_i + r² σ_i²) over groups with b_i &gt; 0, compared with χ²(k − 1)
 * (one degree of freedom taken by r). The denominator is the Poisson variance of n_i plus the MC variance of
 * r b_i.
 *
 * <ul>
 *   <li>Groups with b_i ≤ 0 (no reference weight, or negative weights outweighing the positive ones) are left out
 *   of the sum and of r; how many, and how many observed events they hold, is part of the result
 *   ({@link #leftOut}, {@link #observedLeftOut}) so that callers never drop them silently;</li>
 *   <li>fewer than two usable groups: NaN.</li>
 * </ul>
 *
 * <p>Accuracy: the χ² approximation needs r b_i of a few events or more per group. The result is marked
 * {@link #sparse} when more than a fifth of the tested groups expect fewer than 5 events (r b_i &lt; 5) or any
 * expects fewer than 1 (common practice, no source): its p-value is then a guide only (merge groups), and
 * {@link #medianExpected} says how sparse.
 *
 * @param statistic χ²
 * @param dof k − 1
 * @param pValue the upper tail of χ²(k − 1)
 * @param sparse whether the groups expect too few events for the χ² approximation (see above)
 * @param medianExpected the median of r b_i over the tested groups (NaN without any)
 * @param leftOut groups left out because b_i ≤ 0 (or their variance is not positive)
 * @param observedLeftOut the observed events in those groups
 */
public record Homogeneity(double statistic, int dof, double pValue, boolean sparse, double medianExpected,
    int leftOut, long observedLeftOut) {
  /** Computes the statistic. */
  public static Homogeneity of(long[] observed, double[] expected, double[] expectedVariance) {
    double n = 0;
    double b = 0;
    for (int i = 0; i < observed.length; i++) {
      // r is fitted on the groups that enter the sum (a group with b_i ≤ 0 is left out of both)
      if (expected[i] > 0) {
        n += observed[i];
        b += expected[i];
      }
    }
    if (!(b > 0)) {
      int left = 0;
      long leftN = 0;
      for (long o : observed) {
        left++;
        leftN += o;
      }
      return new Homogeneity(Double.NaN, 0, Double.NaN, false, Double.NaN, left, leftN);
    }
    double r = n / b;
    double chi2 = 0;
    int k = 0;
    int left = 0;
    long leftN = 0;
    int small = 0;
    boolean tiny = false;
    double[] fitted = new double[observed.length];
    for (int i = 0; i < observed.length; i++) {
      double var = r * expected[i] + r * r * expectedVariance[i];
      if (expected[i] > 0 && var > 0) {
        double d = observed[i] - r * expected[i];
        chi2 += d * d / var;
        fitted[k++] = r * expected[i];
        small += r * expected[i] < 5 ? 1 : 0;
        tiny |= r * expected[i] < 1;
      } else {
        left++;
        leftN += observed[i];
      }
    }
    if (k < 2) {
      return new Homogeneity(Double.NaN, 0, Double.NaN, false, k == 1 ? fitted[0] : Double.NaN, left, leftN);
    }
    java.util.Arrays.sort(fitted, 0, k);
    double median = k % 2 == 1 ? fitted[k / 2] : 0.5 * (fitted[k / 2 - 1] + fitted[k / 2]);
    boolean sparse = tiny || 5L * small > k;
    return new Homogeneity(chi2, k - 1, ChiSquaredTail.pValue(chi2, k - 1), sparse, median, left, leftN);
  }
}
