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
}
