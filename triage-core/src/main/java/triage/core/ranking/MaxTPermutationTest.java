package triage.core.ranking;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.PermutationSampler;
import org.apache.commons.rng.simple.RandomSource;

/**
 * Permutation test of several features at once with the Westfall–Young single-step maxT adjustment.
 *
 * <p>Formula: for features {@code f = 1..F} with observed statistics {@code T_f} (larger = more different) and
 * statistics {@code T_f^(b)} of B random relabelings of the pooled events, the raw p-value is
 * {@code p_f = (1 + #{b : T_f^(b) >= T_f}) / (B + 1)} and the family-wise adjusted p-value is
 * {@code p~_f = (1 + #{b : max_g T_g^(b) >= T_f}) / (B + 1)}. Rejecting every feature with {@code p~_f <= alpha}
 * controls the family-wise error rate at alpha under the complete null (exchangeable labels), for any
 * dependence between features.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>the statistics should be on a common scale across features (e.g. KS D with the same sample sizes, or
 *       {@code |AUC - 1/2|}); maxT with heterogeneous scales loses power but keeps its error control;</li>
 *   <li>ties: a replica counts as at least as extreme when {@code T^(b) >= T (1 - 1e-12) - 1e-300}, so that
 *       rounding differences of equal statistics count as ties (conservative);</li>
 *   <li>weights move with their events under relabeling; the test assumes exchangeability of the pooled events
 *       under the null, which weighted reference events do not strictly satisfy — the p-values are then
 *       approximate;</li>
 *   <li>a NaN statistic, fewer than one observed or reference event, or mismatched lengths throw
 *       {@link RankingArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: B Fisher–Yates shuffles (commons-rng {@link PermutationSampler#shuffle}) of the pooled index
 * array from a seeded XO_RO_SHI_RO_128_PP generator; the first {@code n_obs} shuffled indices form the observed
 * group. Buffers are reused across permutations. Reference: P.H. Westfall, S.S. Young, Resampling-Based Multiple
 * Testing (Wiley, 1993), Algorithm 2.8 (single-step maxT); p-value convention of B. Phipson, G.K. Smyth, Stat.
 * Appl. Genet. Mol. Biol. 9 (2010) 39, doi:10.2202/1544-6115.1585.
 *
 * <p>Accuracy: Monte Carlo; the standard error of a p-value p is about {@code sqrt(p (1 - p) / B)}. Results are
 * reproducible for a given seed, B and input order.
 */
public final class MaxTPermutationTest {
  private static final int DEFAULT_PERMUTATIONS = 999;
  private static final long DEFAULT_SEED = 0x5DEECE66DL;
  private static final double TIE_RELATIVE = 1e-12;

  private final int permutations;
  private final long seed;

  private MaxTPermutationTest(int permutations, long seed) {
    this.permutations = permutations;
    this.seed = seed;
  }

  /**
   * Result of the test.
   *
   * @param statistics observed statistic per feature
   * @param rawPValues unadjusted permutation p-value per feature
   * @param adjustedPValues maxT-adjusted p-value per feature
   * @param permutations number of permutations B
   */
  public record Result(double[] statistics, double[] rawPValues, double[] adjustedPValues, int permutations) {
    /** Copies the arrays and checks p in [0, 1]. */
    public Result {
      statistics = statistics.clone();
      rawPValues = rawPValues.clone();
      adjustedPValues = adjustedPValues.clone();
      for (int f = 0; f < rawPValues.length; f++) {
        Arguments.probability("raw p-value", rawPValues[f]);
        Arguments.probability("adjusted p-value", adjustedPValues[f]);
      }
    }

    /** @return a copy of the observed statistics */
    @Override
    public double[] statistics() {
      return statistics.clone();
    }

    /** @return a copy of the raw p-values */
    @Override
    public double[] rawPValues() {
      return rawPValues.clone();
    }

    /** @return a copy of the adjusted p-values */
    @Override
    public double[] adjustedPValues() {
      return adjustedPValues.clone();
    }

    /**
     * @param feature feature index
     * @param alpha family-wise level in (0, 1)
     * @return true when the adjusted p-value of the feature is {@code <= alpha}
     */
    public boolean reject(int feature, double alpha) {
      return adjustedPValues[feature] <= Arguments.openProbability("alpha", alpha);
    }

    @Override
    public boolean equals(Object o) {
      return o instanceof Result r && permutations == r.permutations
        && java.util.Arrays.equals(statistics, r.statistics)
        && java.util.Arrays.equals(rawPValues, r.rawPValues)
        && java.util.Arrays.equals(adjustedPValues, r.adjustedPValues);
    }

    @Override
    public int hashCode() {
      return java.util.Arrays.hashCode(adjustedPValues) * 31 + permutations;
    }

    @Override
    public String toString() {
      return "Result[statistics=" + java.util.Arrays.toString(statistics) + ", rawPValues="
        + java.util.Arrays.toString(rawPValues) + ", adjustedPValues="
        + java.util.Arrays.toString(adjustedPValues) + ", permutations=" + permutations + "]";
    }
  }

  /**
   * @return 999 permutations with a fixed default seed
   */
  public static MaxTPermutationTest withDefaults() {
    return new MaxTPermutationTest(DEFAULT_PERMUTATIONS, DEFAULT_SEED);
  }

  /**
   * @param b number of permutations ({@code >= 1})
   * @return a copy using it
   */
  public MaxTPermutationTest withPermutations(int b) {
    return new MaxTPermutationTest(Arguments.atLeast("number of permutations", b, 1), seed);
  }

  /**
   * @param s random seed
   * @return a copy using it
   */
  public MaxTPermutationTest withSeed(long s) {
    return new MaxTPermutationTest(permutations, s);
  }

  /**
   * @param features pooled values per feature, {@code features[f][i]} for event i
   * @param weights pooled event weights (null for unit weights)
   * @param observed {@code observed[i]} is true for observed events, false for reference events
   * @param statistic statistic applied to every feature
   * @return raw and maxT-adjusted p-values
   */
  public Result test(double[][] features, double[] weights, boolean[] observed, TwoSampleStatistic statistic) {
    Arguments.notNull("features", features);
    Arguments.notNull("statistic", statistic);
    final TwoSampleStatistic[] s = new TwoSampleStatistic[features.length];
    java.util.Arrays.fill(s, statistic);
    return test(features, weights, observed, s);
  }

  /**
   * @param features pooled values per feature, {@code features[f][i]} for event i
   * @param weights pooled event weights (null for unit weights)
   * @param observed {@code observed[i]} is true for observed events, false for reference events
   * @param statistics one statistic per feature
   * @return raw and maxT-adjusted p-values
   */
  public Result test(double[][] features, double[] weights, boolean[] observed, TwoSampleStatistic[] statistics) {
    Arguments.notNull("features", features);
    Arguments.notNull("observed labels", observed);
    Arguments.notNull("statistics", statistics);
    final int nf = Arguments.atLeast("number of features", features.length, 1);
    if (statistics.length != nf) {
      throw Arguments.error("statistics must have %d entries (one per feature) but had %d", nf,
        statistics.length);
    }
    final int n = observed.length;
    for (int f = 0; f < nf; f++) {
      Arguments.notNull("features[" + f + "]", features[f]);
      Arguments.notNull("statistics[" + f + "]", statistics[f]);
      if (features[f].length != n) {
        throw Arguments.error("features[%d] must have %d values (one per event) but had %d", f, n,
          features[f].length);
      }
    }
    if (weights != null && weights.length != n) {
      throw Arguments.error("weights must have %d values (one per event) but had %d", n, weights.length);
    }
    int nObs = 0;
    for (final boolean o : observed) {
      nObs += o ? 1 : 0;
    }
    Arguments.atLeast("number of observed events", nObs, 1);
    Arguments.atLeast("number of reference events", n - nObs, 1);

    final int[] index = new int[n];
    int io = 0;
    int ir = nObs;
    for (int i = 0; i < n; i++) {
      if (observed[i]) {
        index[io++] = i;
      } else {
        index[ir++] = i;
      }
    }
    final double[] x = new double[nObs];
    final double[] y = new double[n - nObs];
    final double[] wx = weights == null ? null : new double[nObs];
    final double[] wy = weights == null ? null : new double[n - nObs];
    final double[] t = new double[nf];
    for (int f = 0; f < nf; f++) {
      t[f] = evaluate(statistics[f], features[f], weights, index, x, wx, y, wy, f);
    }
    final double[] threshold = new double[nf];
    for (int f = 0; f < nf; f++) {
      threshold[f] = t[f] - Math.abs(t[f]) * TIE_RELATIVE - Double.MIN_NORMAL;
    }
    final long[] rawCount = new long[nf];
    final long[] maxCount = new long[nf];
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(seed);
    for (int b = 0; b < permutations; b++) {
      triage.core.Cancellation.check();
      PermutationSampler.shuffle(rng, index);
      double max = Double.NEGATIVE_INFINITY;
      for (int f = 0; f < nf; f++) {
        final double tb = evaluate(statistics[f], features[f], weights, index, x, wx, y, wy, f);
        if (tb >= threshold[f]) {
          rawCount[f]++;
        }
        max = Math.max(max, tb);
      }
      for (int f = 0; f < nf; f++) {
        if (max >= threshold[f]) {
          maxCount[f]++;
        }
      }
    }
    final double[] raw = new double[nf];
    final double[] adj = new double[nf];
    for (int f = 0; f < nf; f++) {
      raw[f] = (rawCount[f] + 1.0) / (permutations + 1.0);
      adj[f] = (maxCount[f] + 1.0) / (permutations + 1.0);
    }
    return new Result(t, raw, adj, permutations);
  }

  private static double evaluate(TwoSampleStatistic s, double[] values, double[] weights, int[] index,
                  double[] x, double[] wx, double[] y, double[] wy, int feature) {
    final int nObs = x.length;
    for (int i = 0; i < nObs; i++) {
      x[i] = values[index[i]];
    }
    for (int i = 0; i < y.length; i++) {
      y[i] = values[index[nObs + i]];
    }
    if (weights != null) {
      for (int i = 0; i < nObs; i++) {
        wx[i] = weights[index[i]];
      }
      for (int i = 0; i < y.length; i++) {
        wy[i] = weights[index[nObs + i]];
      }
    }
    final double v = s.compute(x, wx, y, wy);
    if (Double.isNaN(v)) {
      throw Arguments.error("statistic of feature %d must not be NaN", feature);
    }
    return v;
  }
}
