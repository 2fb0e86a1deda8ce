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
 *       under the null, which holds when every event has the same weight. Pooled events of different weights (unit
 *       observed events and small-weight reference events) are not exchangeable: a relabelled group then mixes
 *       both and has a far smaller effective size than the real one, and the p-values come out far too large;
 *       {@link FeatureRanking} uses {@link ReferenceDrawTest} in that case;</li>
 *   <li>a NaN statistic, fewer than one observed or reference event, or mismatched lengths throw
 *       {@link RankingArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: B Fisher–Yates shuffles (commons-rng {@link PermutationSampler#shuffle}) of the pooled index
 * array from a seeded XO_RO_SHI_RO_128_PP generator; the first {@code n_obs} shuffled indices form the observed
 * group. Buffers are reused across permutations. Reference: Resampling-Based Multiple Testing (1993),
 * Algorithm 2.8 (single-step maxT); p-value convention of "Permutation p-values should never be zero", Stat.
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
      Arguments.notNull("statistics[" + f + "]", statistics[f]);
    }
    final int nObs = checkedObservedCount(features, weights, observed);

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
      countMax(max, threshold, maxCount);
    }
    return result(t, rawCount, maxCount);
  }

  /**
   * The same test for the weighted Kolmogorov–Smirnov distance on every feature, in {@code O(n)} per feature and
   * permutation instead of a sort: each feature's pooled values are sorted once, and a permutation only moves the
   * labels. The permutations are those of {@link #test} with the same seed (the same shuffles of the same index
   * array), so both give the same p-values up to ties within the relative tolerance. The features are shared out
   * among up to {@code threads} workers, each replaying the same shuffles; the per-permutation maxima are combined
   * in a fixed order, so the result does not depend on the thread count.
   *
   * @param features pooled values per feature
   * @param weights pooled event weights (null for unit weights)
   * @param observed labels
   * @param threads workers, at least 1
   * @return raw and maxT-adjusted p-values; {@code statistics} are the observed distances
   */
  public Result testKolmogorovSmirnov(double[][] features, double[] weights, boolean[] observed, int threads) {
    Arguments.notNull("features", features);
    Arguments.notNull("observed labels", observed);
    final int nf = Arguments.atLeast("number of features", features.length, 1);
    final int n = observed.length;
    final int nObs = checkedObservedCount(features, weights, observed);
    for (int f = 0; f < nf; f++) {
      Arguments.finiteValues("features[" + f + "]", features[f]);
    }
    final double[] w = new double[n];
    double total = 0;
    for (int i = 0; i < n; i++) {
      w[i] = weights == null ? 1 : weights[i];
      if (!Double.isFinite(w[i])) {
        throw Arguments.error("weight %d must be finite but was %s", i, w[i]);
      }
      total += w[i];
    }
    // Sorted order and tie-run ends per feature, once.
    // Per feature: the sorted order, each position's weight, and whether a tie run ends there.
    final int[][] order = new int[nf][];
    final double[][] sortedWeight = new double[nf][n];
    final boolean[][] runEnd = new boolean[nf][n];
    java.util.stream.IntStream.range(0, nf).parallel().forEach(f -> {
      final double[] v = features[f];
      order[f] = java.util.stream.IntStream.range(0, n).boxed()
          .sorted((a, b) -> Double.compare(v[a], v[b])).mapToInt(Integer::intValue).toArray();
      for (int p = 0; p < n; p++) {
        sortedWeight[f][p] = w[order[f][p]];
        runEnd[f][p] = p == n - 1 || v[order[f][p + 1]] != v[order[f][p]];
      }
    });
    final int[] start = new int[n];
    int io = 0;
    int ir = nObs;
    for (int i = 0; i < n; i++) {
      if (observed[i]) {
        start[io++] = i;
      } else {
        start[ir++] = i;
      }
    }
    final int obsCount = nObs;
    final double totalWeight = total;
    final double[] t = new double[nf];
    {
      final byte[] label = new byte[n];
      final double[] wo = new double[1];
      for (int i = 0; i < n; i++) {
        label[i] = (byte) (observed[i] ? 1 : 0);
        wo[0] += observed[i] ? w[i] : 0;
      }
      final double[] d = new double[1];
      for (int f = 0; f < nf; f++) {
        ksBlock(order[f], sortedWeight[f], runEnd[f], label, 1, wo, totalWeight, new double[1], d);
        if (Double.isNaN(d[0])) {
          throw Arguments.error("statistic of feature %d must not be NaN (observed or reference weight sums to 0)",
              f);
        }
        t[f] = d[0];
      }
    }
    final double[] threshold = new double[nf];
    for (int f = 0; f < nf; f++) {
      threshold[f] = t[f] - Math.abs(t[f]) * TIE_RELATIVE - Double.MIN_NORMAL;
    }
    final int workers = Math.max(1, Math.min(Arguments.atLeast("threads", threads, 1), nf));
    final long[][] rawCount = new long[workers][nf];
    final long[] maxCount = new long[nf];
    // Permutations go in blocks of eight: bit j of packed[e] is event e's label in the block's j-th permutation,
    // so each feature's sorted arrays are streamed from memory once per block, not once per permutation (they do
    // not fit in cache for large samples). Every worker replays the same shuffles for its own features; the
    // per-permutation maxima of one chunk of permutations are combined in worker order before the next chunk.
    final int[][] index = new int[workers][];
    final UniformRandomProvider[] rng = new UniformRandomProvider[workers];
    for (int k = 0; k < workers; k++) {
      index[k] = start.clone();
      rng[k] = RandomSource.XO_RO_SHI_RO_128_PP.create(seed);
    }
    final int chunk = 64 * BLOCK;
    final double[][] maxOf = new double[workers][chunk];
    for (int c0 = 0; c0 < permutations; c0 += chunk) {
      final int nc = Math.min(chunk, permutations - c0);
      java.util.stream.IntStream.range(0, workers).parallel().forEach(k -> {
        final byte[] packed = new byte[n];
        final double[] wo = new double[BLOCK];
        final double[] d = new double[BLOCK];
        final double[] co = new double[BLOCK];
        for (int b0 = 0; b0 < nc; b0 += BLOCK) {
          triage.core.Cancellation.check();
          final int nb = Math.min(BLOCK, nc - b0);
          java.util.Arrays.fill(packed, (byte) 0);
          for (int j2 = 0; j2 < nb; j2++) {
            PermutationSampler.shuffle(rng[k], index[k]);
            double sum = 0;
            for (int i2 = 0; i2 < obsCount; i2++) {
              packed[index[k][i2]] |= (byte) (1 << j2);
              sum += w[index[k][i2]];
            }
            wo[j2] = sum;
          }
          for (int j2 = 0; j2 < nb; j2++) {
            maxOf[k][b0 + j2] = Double.NEGATIVE_INFINITY;
          }
          for (int f = k; f < nf; f += workers) {
            ksBlock(order[f], sortedWeight[f], runEnd[f], packed, nb, wo, totalWeight, co, d);
            for (int j2 = 0; j2 < nb; j2++) {
              // A relabeling whose group weight is not positive (possible with negative weights) has no
              // defined distance: it counts as at least as extreme (conservative), never as left out.
              final double dj = Double.isNaN(d[j2]) ? Double.POSITIVE_INFINITY : d[j2];
              if (dj >= threshold[f]) {
                rawCount[k][f]++;
              }
              maxOf[k][b0 + j2] = Math.max(maxOf[k][b0 + j2], dj);
            }
          }
        }
      });
      for (int b = 0; b < nc; b++) {
        double max = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < workers; k++) {
          max = Math.max(max, maxOf[k][b]);
        }
        countMax(max, threshold, maxCount);
      }
    }
    final long[] raw = new long[nf];
    for (int k = 0; k < workers; k++) {
      for (int f = 0; f < nf; f++) {
        raw[f] += rawCount[k][f];
      }
    }
    return result(t, raw, maxCount);
  }

  /** Counts, for every feature, whether a permutation's largest statistic reaches its observed one. */
  private static void countMax(double max, double[] threshold, long[] maxCount) {
    for (int f = 0; f < threshold.length; f++) {
      if (max >= threshold[f]) {
        maxCount[f]++;
      }
    }
  }

  /** The p-values {@code (k + 1)/(B + 1)} from the raw and maximum counts. */
  private Result result(double[] t, long[] rawCount, long[] maxCount) {
    final double[] raw = new double[t.length];
    final double[] adj = new double[t.length];
    for (int f = 0; f < t.length; f++) {
      raw[f] = (rawCount[f] + 1.0) / (permutations + 1.0);
      adj[f] = (maxCount[f] + 1.0) / (permutations + 1.0);
    }
    return new Result(t, raw, adj, permutations);
  }

  /** Checks one value per event in every feature and weight, and at least one event of each label. */
  private static int checkedObservedCount(double[][] features, double[] weights, boolean[] observed) {
    final int n = observed.length;
    for (int f = 0; f < features.length; f++) {
      Arguments.notNull("features[" + f + "]", features[f]);
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
    return nObs;
  }

  /** Permutations labelled together, one bit each. */
  private static final int BLOCK = 8;

  /**
   * The weighted KS distances of {@code nb} labelings at once along one feature's sorted order. With
   * {@code co_j} the weight labelled observed in labeling j up to a position and {@code C} all weight up to it,
   * {@code D_j = max over run ends |co_j/wo_j − (C − co_j)/(W − wo_j)|}.
   */
  private static void ksBlock(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, int nb,
      double[] wo, double total, double[] co, double[] d) {
    final double[] a = new double[nb];
    final double[] c = new double[nb];
    for (int j = 0; j < nb; j++) {
      a[j] = 1 / wo[j] + 1 / (total - wo[j]);
      c[j] = 1 / (total - wo[j]);
      co[j] = 0;
      d[j] = 0;
    }
    double all = 0;
    final int n = order.length;
    if (nb == BLOCK) {
      KsBlock.best().run(order, sortedWeight, runEnd, packed, a, c, d);
      return;
    }
    for (int p = 0; p < n; p++) {
      final int bits = packed[order[p]];
      final double sw = sortedWeight[p];
      all += sw;
      for (int j = 0; j < nb; j++) {
        co[j] += (bits & (1 << j)) != 0 ? sw : 0;
      }
      if (runEnd[p]) {
        for (int j = 0; j < nb; j++) {
          d[j] = Math.max(d[j], Math.abs(co[j] * a[j] - all * c[j]));
        }
      }
    }
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
