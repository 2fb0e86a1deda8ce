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
}
