package triage.core.inference;

/**
 * Whether a selection takes the same share of the observed events in every category (run, block, detector
 * sector, trigger): the homogeneity test of the 2 × K contingency table of selected and not-selected observed
 * counts, by Pearson's χ² and by the G-test (likelihood ratio), with per-category pulls.
 *
 * <p>With N_k observed events in category k, S_k of them selected, S = Σ S_k and N = Σ N_k, the expected selected
 * count under homogeneity is E_k = N_k S / N (and N_k − E_k not selected). Pearson's statistic sums (O − E)²/E
 * over both cells of every category; G = 2 Σ O ln(O/E). Both are compared with χ²(K − 1). Categories without
 * events are left out of K. The pull of category k is the adjusted residual
 * {@code (S_k − E_k) / sqrt(E_k (1 − N_k/N)(1 − S/N))}, approximately standard normal under homogeneity (for a
 * 2 × 2 table its square equals Pearson's χ²: an identity the tests check).
 *
 * <p>Unlike a comparison with the reference, this test needs no simulation: a real effect spread over the
 * detector and the running period takes the same share everywhere, a noisy sector or a few bad runs do not. It
 * needs a few expected events per cell for the χ² approximation (common practice, no source).
 *
 * @param pearson Pearson's χ²
 * @param g the G statistic
 * @param dof K − 1 (0 and NaN statistics with fewer than two categories or nothing selected)
 * @param pearsonP upper tail of χ²(dof) at {@code pearson}
 * @param gP upper tail at {@code g}
 * @param pulls per category (in input order) the adjusted residual of the selected cell; NaN for empty categories
 */
public record SelectionShare(double pearson, double g, int dof, double pearsonP, double gP, double[] pulls) {
  /**
   * The test.
   *
   * @param selected selected observed events per category
   * @param total all observed events per category (at least the selected ones)
   */
  public static SelectionShare of(long[] selected, long[] total) {
    if (selected.length != total.length) {
      throw new InferenceArgumentException("selected and total counts differ in length");
    }
    long s = 0;
    long n = 0;
    int k = 0;
    for (int i = 0; i < total.length; i++) {
      if (selected[i] < 0 || selected[i] > total[i]) {
        throw new InferenceArgumentException("category " + i + ": selected " + selected[i] + " is not within 0.."
            + total[i]);
      }
      s += selected[i];
      n += total[i];
      k += total[i] > 0 ? 1 : 0;
    }
    double[] pulls = new double[total.length];
    java.util.Arrays.fill(pulls, Double.NaN);
    if (k < 2 || s == 0 || s == n) {
      return new SelectionShare(Double.NaN, Double.NaN, 0, Double.NaN, Double.NaN, pulls);
    }
    double share = (double) s / n;
    double chi2 = 0;
    double g = 0;
    for (int i = 0; i < total.length; i++) {
      if (total[i] == 0) {
        continue;
      }
      double e1 = total[i] * share;
      double e0 = total[i] - e1;
      double o1 = selected[i];
      double o0 = total[i] - selected[i];
      chi2 += (o1 - e1) * (o1 - e1) / e1 + (o0 - e0) * (o0 - e0) / e0;
      g += (o1 > 0 ? 2 * o1 * Math.log(o1 / e1) : 0) + (o0 > 0 ? 2 * o0 * Math.log(o0 / e0) : 0);
      pulls[i] = (o1 - e1) / Math.sqrt(e1 * (1 - (double) total[i] / n) * (1 - share));
    }
    return new SelectionShare(chi2, g, k - 1, ChiSquaredTail.pValue(chi2, k - 1), ChiSquaredTail.pValue(g, k - 1),
        pulls);
  }

  /**
   * The Monte Carlo p-value of Pearson's χ² with the margins fixed, for tables too sparse for the χ²
   * approximation: {@code (k + 1) / (B + 1)} with k of B tables at least as extreme. Each table places the S
   * selected events one by one on events drawn without replacement from the N observed (a Fenwick tree over
   * the categories' remaining counts: {@code O(S log K)} per table, primitive arrays only).
   *
   * @param selected as in {@link #of}
   * @param total as in {@link #of}
   * @param tables B, at least 1
   * @param seed the seed of the draws
   * @return the p-value, NaN when {@link #of} gives none
   */
  public static double monteCarloP(long[] selected, long[] total, int tables, long seed) {
    if (tables < 1) {
      throw new InferenceArgumentException("the number of Monte Carlo tables must be at least 1, got " + tables);
    }
    SelectionShare observed = of(selected, total);
    if (Double.isNaN(observed.pearson())) {
      return Double.NaN;
    }
    int k = total.length;
    long n = 0;
    long s = 0;
    for (int i = 0; i < k; i++) {
      n += total[i];
      s += selected[i];
    }
    // Place the smaller of the two groups: the statistic is the same either way.
    long place = Math.min(s, n - s);
    double share = (double) s / n;
    long[] tree0 = new long[k + 1];
    for (int i = 0; i < k; i++) {
      for (int j = i + 1; j <= k; j += j & -j) {
        tree0[j] += total[i];
      }
    }
    int top = Integer.highestOneBit(Math.max(1, k));
    long[] tree = new long[k + 1];
    long[] x = new long[k];
    org.apache.commons.rng.UniformRandomProvider rng = org.apache.commons.rng.simple.RandomSource.XO_RO_SHI_RO_128_PP
        .create(seed);
    // A relative margin keeps ties (the observed table drawn again) counted as "at least as extreme".
    double threshold = observed.pearson() * (1 - 1e-12);
    int extreme = 0;
    for (int b = 0; b < tables; b++) {
      if ((b & 255) == 0) {
        triage.core.Cancellation.check();
      }
      System.arraycopy(tree0, 0, tree, 0, k + 1);
      java.util.Arrays.fill(x, 0);
      long left = n;
      for (long d = 0; d < place; d++) {
        long r = rng.nextLong(left);
        int pos = 0;
        for (int step = top; step > 0; step >>= 1) {
          int next = pos + step;
          if (next <= k && tree[next] <= r) {
            pos = next;
            r -= tree[next];
          }
        }
        x[pos]++;
        for (int j = pos + 1; j <= k; j += j & -j) {
          tree[j]--;
        }
        left--;
      }
      double chi2 = 0;
      for (int i = 0; i < k; i++) {
        if (total[i] == 0) {
          continue;
        }
        double sel = place == s ? x[i] : total[i] - x[i];
        double e1 = total[i] * share;
        double e0 = total[i] - e1;
        chi2 += (sel - e1) * (sel - e1) / e1 + (total[i] - sel - e0) * (total[i] - sel - e0) / e0;
      }
      extreme += chi2 >= threshold ? 1 : 0;
    }
    return (extreme + 1.0) / (tables + 1.0);
  }
}
