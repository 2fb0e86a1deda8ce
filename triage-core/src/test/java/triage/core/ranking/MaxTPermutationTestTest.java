package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import org.apache.commons.statistics.distribution.ContinuousDistribution;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;

class MaxTPermutationTestTest {
  private static final TwoSampleStatistic KS_D = WeightedKolmogorovSmirnovTest.withDefaults()::statistic;

  /** features[f][i], first nObs events observed. */
  private static double[][] nullData(ContinuousDistribution.Sampler s, int nf, int n) {
    final double[][] f = new double[nf][n];
    for (int k = 0; k < nf; k++) {
      for (int i = 0; i < n; i++) {
        f[k][i] = s.sample();
      }
    }
    return f;
  }

  private static boolean[] labels(int n, int nObs) {
    final boolean[] o = new boolean[n];
    for (int i = 0; i < nObs; i++) {
      o[i] = true;
    }
    return o;
  }

  @Test
  void familyWiseErrorAndRawUniformityUnderNull() {
    // Complete null: 5 independent N(0,1) features, 30 observed + 30 reference events, B = 99 permutations,
    // 300 seeded data sets. Resampling-Based Multiple Testing (1993): FWER of {p~ <= alpha} is <= alpha; with
    // exchangeable continuous statistics P(p_raw <= j/(B+1)) = j/(B+1). Stated tolerances: FWER at alpha = 0.1
    // and 0.2 below alpha + 3 binomial sd; raw fractions at 0.05, 0.1, 0.5 within 4 sd of 1500 feature tests.
    // KS D on 30 vs 30 has ties between permutations (discrete values), which only makes p conservative.
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(123L);
    final ContinuousDistribution.Sampler s = NormalDistribution.of(0, 1).createSampler(rng);
    final int sets = 300;
    final int nf = 5;
    final boolean[] obs = labels(60, 30);
    int fwe10 = 0;
    int fwe20 = 0;
    final double[] alphas = {0.05, 0.1, 0.5};
    final int[] raw = new int[alphas.length];
    final TwoSampleStatistic auc = (x, wx, y, wy) -> WeightedRocAuc.withDefaults().separation(x, wx, y, wy);
    for (int e = 0; e < sets; e++) {
      final MaxTPermutationTest.Result r = MaxTPermutationTest.withDefaults().withPermutations(99).withSeed(e)
        .test(nullData(s, nf, 60), null, obs, e % 2 == 0 ? KS_D : auc);
      double minAdj = 1;
      for (int f = 0; f < nf; f++) {
        minAdj = Math.min(minAdj, r.adjustedPValues()[f]);
        for (int a = 0; a < alphas.length; a++) {
          raw[a] += r.rawPValues()[f] <= alphas[a] + 1e-12 ? 1 : 0;
        }
        assertTrue(r.adjustedPValues()[f] >= r.rawPValues()[f]);
      }
      fwe10 += minAdj <= 0.1 ? 1 : 0;
      fwe20 += minAdj <= 0.2 ? 1 : 0;
    }
    assertTrue(fwe10 <= sets * (0.1 + 3 * Math.sqrt(0.09 / sets)), "FWER(0.1) = " + (double) fwe10 / sets);
    assertTrue(fwe20 <= sets * (0.2 + 3 * Math.sqrt(0.16 / sets)), "FWER(0.2) = " + (double) fwe20 / sets);
    final int tests = sets * nf;
    for (int a = 0; a < alphas.length; a++) {
      final double sd = Math.sqrt(alphas[a] * (1 - alphas[a]) / tests);
      final double frac = (double) raw[a] / tests;
      assertTrue(Math.abs(frac - alphas[a]) <= 4 * sd, "raw P(p<=" + alphas[a] + ") = " + frac);
    }
  }

  @Test
  void detectsAShiftedFeatureAndIsReproducible() {
    // feature 2 is shifted by 1.5 sd in the observed group: its adjusted p-value is the minimum 1/(B+1)
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(9L);
    final ContinuousDistribution.Sampler s = NormalDistribution.of(0, 1).createSampler(rng);
    final double[][] f = nullData(s, 4, 80);
    for (int i = 0; i < 40; i++) {
      f[2][i] += 1.5;
    }
    final double[] w = new double[80];
    for (int i = 0; i < 80; i++) {
      w[i] = i < 40 ? 1 : 0.5 + (i % 3) * 0.5;
    }
    final MaxTPermutationTest test = MaxTPermutationTest.withDefaults().withPermutations(199).withSeed(42);
    final MaxTPermutationTest.Result r = test.test(f, w, labels(80, 40), KS_D);
    assertEquals(1.0 / 200, r.adjustedPValues()[2], 0.0);
    assertTrue(r.reject(2, 0.05));
    assertEquals(r, test.test(f, w, labels(80, 40), KS_D));
    assertEquals(199, r.permutations());
    // returned arrays are copies
    r.rawPValues()[0] = -1;
    assertTrue(r.rawPValues()[0] >= 0);
  }

  @Test
  void edgeCases() {
    final double[][] f = {{1, 2, 3, 4}};
    final MaxTPermutationTest t = MaxTPermutationTest.withDefaults();
    assertThrows(RankingArgumentException.class, () -> t.withPermutations(0));
    assertThrows(RankingArgumentException.class, () -> t.test(f, null, new boolean[] {true, true, true, true},
      KS_D));
    assertThrows(RankingArgumentException.class, () -> t.test(f, null, new boolean[] {true, false}, KS_D));
    assertThrows(RankingArgumentException.class, () -> t.test(f, new double[] {1}, labels(4, 2), KS_D));
    assertThrows(RankingArgumentException.class, () -> t.test(f, null, labels(4, 2),
      (x, wx, y, wy) -> Double.NaN));
    assertThrows(RankingArgumentException.class, () -> t.test(f, null, labels(4, 2), new TwoSampleStatistic[2]));
  }

  /**
   * The sorted-once KS path gives the same statistics and p-values as the generic path with the weighted KS
   * statistic (same shuffles), on weighted data with ties and a shifted feature, for one and three workers.
   */
  @Test
  void theFastKolmogorovSmirnovPathMatchesTheGenericOne() {
    UniformRandomProvider r = RandomSource.XO_RO_SHI_RO_128_PP.create(42L);
    int n = 700;
    int nf = 4;
    double[][] x = new double[nf][n];
    double[] w = new double[n];
    boolean[] obs = new boolean[n];
    for (int i = 0; i < n; i++) {
      obs[i] = i % 7 == 0;
      w[i] = obs[i] ? 1 : 0.2 + r.nextDouble();
      x[0][i] = Math.floor(10 * r.nextDouble());
      x[1][i] = r.nextDouble() + (obs[i] ? 0.15 : 0);
      x[2][i] = r.nextDouble();
      x[3][i] = Math.round(r.nextDouble() * 50) / 50.0;
    }
    WeightedKolmogorovSmirnovTest ks = WeightedKolmogorovSmirnovTest.withDefaults();
    MaxTPermutationTest test = MaxTPermutationTest.withDefaults().withPermutations(400).withSeed(9);
    MaxTPermutationTest.Result generic = test.test(x, w, obs, (a, wa, b, wb) -> ks.statistic(a, wa, b, wb));
    for (int threads : new int[] {1, 3}) {
      MaxTPermutationTest.Result fast = test.testKolmogorovSmirnov(x, w, obs, threads);
      for (int f = 0; f < nf; f++) {
        assertEquals(generic.statistics()[f], fast.statistics()[f], 1e-12);
        assertEquals(generic.rawPValues()[f], fast.rawPValues()[f], 0.0, "raw p of feature " + f);
        assertEquals(generic.adjustedPValues()[f], fast.adjustedPValues()[f], 0.0, "adjusted p of feature " + f);
      }
    }
    assertTrue(generic.adjustedPValues()[1] < 0.05, "the shifted feature is found");
  }

  /** The vector and plain-Java inner loops give bit-identical distances (when the vector one is available). */
  @Test
  void theVectorInnerLoopIsBitIdenticalToThePlainOne() {
    UniformRandomProvider r = RandomSource.XO_RO_SHI_RO_128_PP.create(7L);
    int n = 5000;
    int[] order = new int[n];
    double[] sw = new double[n];
    boolean[] runEnd = new boolean[n];
    byte[] packed = new byte[n];
    for (int p = 0; p < n; p++) {
      order[p] = (p * 7919) % n;
      sw[p] = r.nextDouble() < 0.1 ? 1 : 0.05 + r.nextDouble();
      runEnd[p] = r.nextDouble() < 0.9 || p == n - 1;
      packed[p] = (byte) r.nextInt(256);
    }
    double[] a = new double[8];
    double[] c = new double[8];
    for (int j = 0; j < 8; j++) {
      c[j] = 1 / (1000 + 10 * r.nextDouble());
      a[j] = 1 / (200 + r.nextDouble()) + c[j];
    }
    double[] scalar = new double[8];
    double[] best = new double[8];
    KsBlock.scalar().run(order, sw, runEnd, packed, a, c, scalar);
    KsBlock.best().run(order, sw, runEnd, packed, a, c, best);
    for (int j = 0; j < 8; j++) {
      assertEquals(Double.doubleToRawLongBits(scalar[j]), Double.doubleToRawLongBits(best[j]), "lane " + j);
      assertTrue(scalar[j] > 0);
    }
    System.err.println("KS inner loop in use: " + KsBlock.best().getClass().getSimpleName());
  }

  /** The same for the inner loop of the null draws from a weighted reference (negative weights included). */
  @Test
  void theVectorDrawLoopIsBitIdenticalToThePlainOne() {
    UniformRandomProvider r = RandomSource.XO_RO_SHI_RO_128_PP.create(11L);
    int n = 5000;
    int[] order = new int[n];
    double[] u = new double[n];
    double[] v = new double[n];
    boolean[] runEnd = new boolean[n];
    byte[] packed = new byte[n];
    for (int p = 0; p < n; p++) {
      order[p] = (p * 7919) % n;
      u[p] = p % 97 == 0 ? -1 : 1;
      v[p] = u[p] * (0.05 + r.nextDouble());
      runEnd[p] = r.nextDouble() < 0.9 || p == n - 1;
      packed[p] = r.nextDouble() < 0.5 ? 0 : (byte) r.nextInt(256);
    }
    double[] a = new double[8];
    double[] c = new double[8];
    for (int j = 0; j < 8; j++) {
      a[j] = 1 / (1200 + 10 * r.nextDouble());
      c[j] = 1 / (1500 + 10 * r.nextDouble());
    }
    double[] scalar = new double[8];
    double[] best = new double[8];
    KsBlock.scalar().runDraws(order, u, v, runEnd, packed, a, c, scalar);
    KsBlock.best().runDraws(order, u, v, runEnd, packed, a, c, best);
    for (int j = 0; j < 8; j++) {
      assertEquals(Double.doubleToRawLongBits(scalar[j]), Double.doubleToRawLongBits(best[j]), "lane " + j);
      assertTrue(scalar[j] > 0);
    }
  }

  /** Non-finite weights are refused; relabelings without a positive group weight count as extreme, not as absent. */
  @Test
  void theFastPathRefusesBadWeightsAndCountsUndefinedRelabelingsAsExtreme() {
    double[][] x = {{0.1, 0.2, 0.3, 0.4, 0.5, 0.6}};
    boolean[] obs = {true, false, false, false, false, false};
    MaxTPermutationTest test = MaxTPermutationTest.withDefaults().withPermutations(99).withSeed(3);
    assertThrows(RankingArgumentException.class, () -> test.testKolmogorovSmirnov(x,
        new double[] {1, Double.NaN, 1, 1, 1, 1}, obs, 1));
    // The observed labeling itself without a distance: refused, as in the generic path.
    assertThrows(RankingArgumentException.class, () -> test.testKolmogorovSmirnov(x,
        new double[] {0, 1, 1, 1, 1, 1}, obs, 1));
    // Event 5 weighs 0: a relabeling that draws it as the one observed event has no observed weight and no
    // distance (one in six of them); such relabelings must raise the p-value, never lower it.
    MaxTPermutationTest.Result r = test.testKolmogorovSmirnov(x, new double[] {1, 1, 1, 1, 1, 0}, obs, 1);
    assertTrue(r.rawPValues()[0] >= 1.0 / 6 - 0.1, "p " + r.rawPValues()[0]);
  }
}
