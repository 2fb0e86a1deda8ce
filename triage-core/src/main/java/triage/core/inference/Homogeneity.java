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
 *   <li>Groups with b_i = 0 are left out of the sum (their n_i is reported by callers);</li>
 *   <li>fewer than two usable groups: NaN.</li>
 * </ul>
 *
 * <p>Accuracy: the χ² approximation needs r b_i of a few events or more per group; with sparse groups the p-value
 * is approximate (merge groups). Common practice, no source.
 *
 * @param statistic χ²
 * @param dof k − 1
 * @param pValue the upper tail of χ²(k − 1)
 */
public record Homogeneity(double statistic, int dof, double pValue) {
  /** Computes the statistic. */
  public static Homogeneity of(long[] observed, double[] expected, double[] expectedVariance) {
    double n = 0;
    double b = 0;
    for (int i = 0; i < observed.length; i++) {
      // r is fitted on the groups that enter the sum (a group with b_i = 0 is left out of both)
      if (expected[i] > 0) {
        n += observed[i];
        b += expected[i];
      }
    }
    if (!(b > 0)) {
      return new Homogeneity(Double.NaN, 0, Double.NaN);
    }
    double r = n / b;
    double chi2 = 0;
    int k = 0;
    for (int i = 0; i < observed.length; i++) {
      double var = r * expected[i] + r * r * expectedVariance[i];
      if (expected[i] > 0 && var > 0) {
        double d = observed[i] - r * expected[i];
        chi2 += d * d / var;
        k++;
      }
    }
    if (k < 2) {
      return new Homogeneity(Double.NaN, 0, Double.NaN);
    }
    return new Homogeneity(chi2, k - 1, ChiSquaredTail.pValue(chi2, k - 1));
  }
}
