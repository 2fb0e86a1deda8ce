package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** The ranking puts a shifted feature first and reports the same numbers as the individual measures. */
class FeatureRankingTest {
  @Test
  void shiftedFeatureComesFirstWithSmallAdjustedP() {
    SplittableRandom r = new SplittableRandom(21);
    int no = 300;
    int nr = 3000;
    double[][] obs = new double[3][no];
    double[][] ref = new double[3][nr];
    double[] w = new double[nr];
    for (int i = 0; i < no; i++) {
      obs[0][i] = r.nextGaussian();
      obs[1][i] = 0.8 + r.nextGaussian();
      obs[2][i] = r.nextGaussian();
    }
    for (int j = 0; j < nr; j++) {
      for (int f = 0; f < 3; f++) {
        ref[f][j] = r.nextGaussian();
      }
      w[j] = 0.5 + r.nextDouble();
    }
    List<FeatureRanking.Row> rows = FeatureRanking.rank(List.of("a", "b", "c"), obs, ref, w, 199, 3);
    assertEquals("b", rows.get(0).feature());
    // With 199 permutations the smallest attainable p-value is 1/200 (estimator (k+1)/(B+1)).
    assertEquals(1.0 / 200, rows.get(0).adjustedP(), 1e-12);
    assertTrue(rows.get(1).adjustedP() > 0.01, rows.toString());
    // Analytic: for unit Gaussians shifted by δ, AUC = Φ(δ/√2); Φ(0.8/√2) − 0.5 = 0.2143 (tolerance: sampling).
    assertEquals(0.2143, rows.get(0).aucSeparation(), 0.04, rows.toString());
    // Analytic: W1 between unit Gaussians shifted by 0.8 is 0.8 (in reference standard deviations ≈ 1).
    assertEquals(0.8, rows.get(0).wasserstein(), 0.15);
    double[] ones = new double[no];
    java.util.Arrays.fill(ones, 1);
    double d = WeightedKolmogorovSmirnovTest.withDefaults().statistic(obs[1], ones, ref[1], w);
    assertEquals(d, rows.get(0).ks());
  }

  @Test
  void everyMeasureEqualsItsOwnPublicMethodBitForBit() {
    // the ranking sorts each feature once and shares the samples between the measures; the result must be
    // exactly what each measure's public method gives (ties, negative weights and a constant feature included)
    SplittableRandom r = new SplittableRandom(5);
    int no = 257;
    int nr = 2049;
    double[][] obs = new double[3][no];
    double[][] ref = new double[3][nr];
    double[] w = new double[nr];
    for (int i = 0; i < no; i++) {
      obs[0][i] = Math.rint(4 * r.nextGaussian()) / 4;
      obs[1][i] = 0.3 + r.nextGaussian();
      obs[2][i] = r.nextInt(3);
    }
    for (int j = 0; j < nr; j++) {
      ref[0][j] = Math.rint(4 * r.nextGaussian()) / 4;
      ref[1][j] = r.nextGaussian();
      ref[2][j] = r.nextInt(4);
      w[j] = j % 97 == 0 ? -0.2 : 0.5 + r.nextDouble();
    }
    List<String> names = List.of("ties", "shift", "integers");
    List<FeatureRanking.Row> rows = FeatureRanking.rank(names, obs, ref, w, 0, 1);
    double[] ones = new double[no];
    java.util.Arrays.fill(ones, 1);
    for (FeatureRanking.Row row : rows) {
      int f = names.indexOf(row.feature());
      var ks = WeightedKolmogorovSmirnovTest.withDefaults().with(NegativeWeights.ALLOW)
          .test(obs[f], ones, ref[f], w);
      assertEquals(ks.statistic(), row.ks(), 0.0);
      assertEquals(ks.pValue(), row.ksAsymptoticP(), 0.0);
      assertEquals(WeightedRocAuc.withDefaults().with(NegativeWeights.ALLOW).separation(obs[f], ones, ref[f], w),
          row.aucSeparation(), 0.0);
      assertEquals(WeightedWasserstein.withDefaults().with(WeightedWasserstein.Units.REFERENCE_STANDARD_DEVIATION)
          .with(NegativeWeights.ALLOW).statistic(obs[f], ones, ref[f], w), row.wasserstein(), 0.0);
      assertEquals(BinnedJensenShannon.withDefaults().with(NegativeWeights.ALLOW).statistic(obs[f], ones, ref[f], w),
          row.jensenShannon(), 0.0);
    }
  }

  @Test
  void weightedReferenceKeepsThePowerOfTheTest() {
    // 1,000 observed events from N(0.15, 1) against 100,000 reference events from N(0, 1) with small, unequal
    // weights (0.005 to 0.015): the asymptotic KS p-value is about 1e-3 (effective sizes), so the resampling p-value
    // must be the smallest attainable, 1/(B + 1). Relabelling the pooled events gave p ≈ 0.94 here, since a
    // relabelled group mixes unit-weight and small-weight events.
    SplittableRandom r = new SplittableRandom(8);
    int no = 1000;
    int nr = 100_000;
    double[][] obs = new double[1][no];
    double[][] ref = new double[1][nr];
    double[] w = new double[nr];
    for (int i = 0; i < no; i++) {
      obs[0][i] = 0.15 + r.nextGaussian();
    }
    for (int j = 0; j < nr; j++) {
      ref[0][j] = r.nextGaussian();
      w[j] = 0.005 + 0.01 * r.nextDouble();
    }
    FeatureRanking.Row row = FeatureRanking.rank(List.of("x"), obs, ref, w, 199, 4).get(0);
    assertTrue(row.ksAsymptoticP() < 0.01, row.toString());
    assertEquals(1.0 / 200, row.rawP(), 1e-12, row.toString());
    assertEquals(1.0 / 200, row.adjustedP(), 1e-12, row.toString());
  }

  @Test
  void weightedReferencePValuesAreUniformWithoutSignal() {
    // Null hypothesis true: observed events from N(0, 1); the reference drawn from N(0, 1.5²) and weighted by the
    // density ratio, so both describe N(0, 1). 400 seeded datasets, 2 features, B = 99: the raw and adjusted
    // p-values of feature 0 must be uniform on {1/100, ..., 1}. Tolerance: the share at or below 0.05 and 0.20
    // within 3.5 binomial standard errors, and the mean within 3.5 standard errors of 0.505.
    int sets = 400;
    int no = 80;
    int nr = 2000;
    double[] raw = new double[sets];
    double[] adj = new double[sets];
    for (int k = 0; k < sets; k++) {
      SplittableRandom r = new SplittableRandom(1000 + k);
      double[][] obs = new double[2][no];
      double[][] ref = new double[2][nr];
      double[] w = new double[nr];
      for (int i = 0; i < no; i++) {
        obs[0][i] = r.nextGaussian();
        obs[1][i] = r.nextGaussian();
      }
      for (int j = 0; j < nr; j++) {
        double x = 1.5 * r.nextGaussian();
        ref[0][j] = x;
        ref[1][j] = r.nextGaussian();
        // N(x; 0, 1) / N(x; 0, 1.5²) up to a constant
        w[j] = Math.exp(-0.5 * x * x + 0.5 * x * x / 2.25) / nr;
      }
      for (FeatureRanking.Row row : FeatureRanking.rank(List.of("a", "b"), obs, ref, w, 99, k)) {
        if (row.feature().equals("a")) {
          raw[k] = row.rawP();
          adj[k] = row.adjustedP();
        }
      }
    }
    for (double[] p : new double[][] {raw}) {
      checkUniform(p);
    }
    // the adjusted p-value is never below the raw one, and its share at or below 0.05 at most about 2 × 0.05
    // (two features)
    long small = java.util.Arrays.stream(adj).filter(x -> x <= 0.05).count();
    assertTrue(small <= 0.10 * sets + 3.5 * Math.sqrt(0.10 * 0.90 * sets), "adjusted p <= 0.05: " + small);
    for (int k = 0; k < sets; k++) {
      assertTrue(adj[k] >= raw[k]);
    }
  }

  /**
   * The same with a larger observed sample against a small reference (n = 150, 1,000 reference events with weights
   * 0.8 to 1.2: n/N_eff ≈ 0.15, largest inclusion probability 0.18, near the limits of the null draws), where the
   * reference's own fluctuation matters. 300 seeded datasets.
   */
  @Test
  void weightedReferencePValuesAreUniformWhenTheReferenceIsSmall() {
    int sets = 300;
    int no = 150;
    int nr = 1000;
    double[] raw = new double[sets];
    for (int k = 0; k < sets; k++) {
      SplittableRandom r = new SplittableRandom(5000 + k);
      double[][] obs = new double[1][no];
      double[][] ref = new double[1][nr];
      double[] w = new double[nr];
      for (int i = 0; i < no; i++) {
        obs[0][i] = r.nextGaussian();
      }
      for (int j = 0; j < nr; j++) {
        ref[0][j] = r.nextGaussian();
        w[j] = 0.8 + 0.4 * r.nextDouble();
      }
      raw[k] = FeatureRanking.rank(List.of("a"), obs, ref, w, 99, k).get(0).rawP();
    }
    checkUniform(raw);
  }

  /**
   * Weights concentrated in a few events give no resampling p-value (a review found 53% and 0% of null p-values at
   * or below 0.05): 50 events of weight 1 among 950 of weight 0.001 (they would be drawn every time), and 100 of
   * weight 9 among 900 of weight 0.111 (inclusion probability 0.9).
   */
  @Test
  void concentratedWeightsGiveNoResamplingPValue() {
    SplittableRandom r = new SplittableRandom(6);
    double[][] obs = new double[1][100];
    for (int i = 0; i < 100; i++) {
      obs[0][i] = r.nextGaussian();
    }
    double[][] ref = new double[1][1000];
    double[] a = new double[1000];
    double[] b = new double[1000];
    for (int j = 0; j < 1000; j++) {
      ref[0][j] = r.nextGaussian();
      a[j] = j < 50 ? 1 : 0.001;
      b[j] = j < 100 ? 9 : 0.111;
    }
    for (double[] w : new double[][] {a, b}) {
      FeatureRanking.Row row = FeatureRanking.rank(List.of("x"), obs, ref, w, 99, 1).get(0);
      assertTrue(Double.isNaN(row.rawP()) && Double.isNaN(row.adjustedP()), row.toString());
    }
  }

  private static void checkUniform(double[] p) {
    int n = p.length;
    for (double level : new double[] {0.05, 0.20}) {
      long below = java.util.Arrays.stream(p).filter(x -> x <= level + 1e-12).count();
      double se = Math.sqrt(level * (1 - level) / n);
      assertEquals(level, below / (double) n, 3.5 * se, "share of p <= " + level);
    }
    double mean = java.util.Arrays.stream(p).average().orElseThrow();
    // p uniform on {1/100, ..., 1}: mean 0.505, standard deviation about 0.2887
    assertEquals(0.505, mean, 3.5 * 0.2887 / Math.sqrt(n));
  }

  @Test
  void equalReferenceWeightsUseTheExactPermutationTest() {
    // all reference weights equal: the weighted distance is the unweighted one, and the p-values are those of the
    // pooled permutation test with unit weights
    SplittableRandom r = new SplittableRandom(2);
    int no = 50;
    int nr = 400;
    double[][] obs = new double[2][no];
    double[][] ref = new double[2][nr];
    double[] w = new double[nr];
    for (int i = 0; i < no; i++) {
      obs[0][i] = 0.3 + r.nextGaussian();
      obs[1][i] = r.nextGaussian();
    }
    for (int j = 0; j < nr; j++) {
      ref[0][j] = r.nextGaussian();
      ref[1][j] = r.nextGaussian();
      w[j] = 0.125;
    }
    List<FeatureRanking.Row> rows = FeatureRanking.rank(List.of("a", "b"), obs, ref, w, 99, 6);
    double[][] pooled = new double[2][no + nr];
    boolean[] isObs = new boolean[no + nr];
    for (int f = 0; f < 2; f++) {
      System.arraycopy(obs[f], 0, pooled[f], 0, no);
      System.arraycopy(ref[f], 0, pooled[f], no, nr);
    }
    java.util.Arrays.fill(isObs, 0, no, true);
    MaxTPermutationTest.Result expected = MaxTPermutationTest.withDefaults().withPermutations(99).withSeed(6)
        .testKolmogorovSmirnov(pooled, null, isObs, 1);
    for (FeatureRanking.Row row : rows) {
      int f = row.feature().equals("a") ? 0 : 1;
      assertEquals(expected.rawPValues()[f], row.rawP(), 0.0);
      assertEquals(expected.adjustedPValues()[f], row.adjustedP(), 0.0);
    }
  }

  @Test
  void tooSmallAWeightedReferenceGivesNoResamplingPValue() {
    double[][] obs = {{0.1, 0.2, 0.3}};
    double[][] ref = {{0.0, 0.5, 1.0, 1.5, 2.0}};
    double[] w = {1, 2, 1, 2, 1};
    FeatureRanking.Row row = FeatureRanking.rank(List.of("x"), obs, ref, w, 19, 1).get(0);
    assertTrue(Double.isNaN(row.rawP()) && Double.isNaN(row.adjustedP()), row.toString());
  }

  @Test
  void aNegativeQuantileBinGivesNoJensenShannonButTheOtherMeasures() {
    // Reference: −1 (weight −0.5), 0 (weight 10), 1..99 (weight 1); Σw = 108.5. The first of the 20 quantile
    // levels, 108.5/20 = 5.425, is reached at 0 (cumulative −0.5, then 9.5), so the first bin [−1, 0) holds the
    // negative weight alone (by hand): the binned divergence is undefined there and is NaN, where it threw (a
    // trace in `rank`); the other measures take signed weights and stay finite.
    double[] ref = new double[101];
    double[] w = new double[101];
    ref[0] = -1;
    w[0] = -0.5;
    w[1] = 10;
    for (int j = 2; j < 101; j++) {
      ref[j] = j - 1;
      w[j] = 1;
    }
    double[] obs = new double[50];
    for (int i = 0; i < 50; i++) {
      obs[i] = 2 * i + 0.5;
    }
    FeatureRanking.Row row = FeatureRanking.rank(List.of("x"), new double[][] {obs}, new double[][] {ref}, w, 0, 1)
        .get(0);
    assertTrue(Double.isNaN(row.jensenShannon()), row.toString());
    assertTrue(Double.isFinite(row.ks()) && Double.isFinite(row.wasserstein())
        && Double.isFinite(row.aucSeparation()), row.toString());
  }
}
