package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.core.ranking.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import org.apache.commons.statistics.distribution.ContinuousDistribution;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;
import triage.core.inference.KolmogorovDistribution;

class WeightedKolmogorovSmirnovTestTest {
  private static final WeightedKolmogorovSmirnovTest KS = WeightedKolmogorovSmirnovTest.withDefaults();

  @Test
  void tenVersusTen() {
    // CHECK-VALUES.md §6 [Q2] docs of Rust crate rv misc::ks_two_sample (exact method after Ark. Mat. 3 (1958) 469) and
    // [C] scipy ks_2samp: D = 0.3, exact two-sided p = 0.7869297884777761. Tolerance 1e-12 relative.
    final double[] xs = {0.95692026, 1.1348812, -0.76579239, -0.58065653, -0.05122393, 0.71598754, 1.39873528,
      0.42790527, 1.84580764, 0.64228521};
    final double[] ys = {0.6948678, -0.3741825, 0.36657279, 1.15834174, -0.32421706, -0.38499295, 1.44976991,
      0.2504608, -0.53694774, 1.42221993};
    final WeightedKolmogorovSmirnovTest.Result r = KS.test(xs, ys);
    assertRelative(0.3, r.statistic(), 1e-14, "D");
    assertRelative(0.7869297884777761, r.pValue(), 1e-12, "exact p");
    assertEquals(WeightedKolmogorovSmirnovTest.PValueMethod.EXACT, r.method());
  }

  @Test
  void smallExactCases() {
    // CHECK-VALUES.md §6 [C]: [1,2,3] vs [4,5,6]: D = 1, exact p = 0.1 = 2/C(6,3);
    // [1..5] vs [3.5,6,7,8]: D = 0.75, exact p = 0.142857 (6 digits printed; 1/7). Tolerance 1e-13 / 4e-6
    // relative.
    WeightedKolmogorovSmirnovTest.Result r = KS.test(new double[] {1, 2, 3}, new double[] {4, 5, 6});
    assertEquals(1.0, r.statistic());
    assertRelative(0.1, r.pValue(), 1e-13, "p");
    r = KS.test(new double[] {1, 2, 3, 4, 5}, new double[] {3.5, 6, 7, 8});
    assertRelative(0.75, r.statistic(), 1e-15, "D");
    assertRelative(0.142857, r.pValue(), 4e-6, "p");
  }

  @Test
  void criticalValueTable() {
    // CHECK-VALUES.md §6 [Q] critical-value table, worked example (1): n=5, m=8, alpha=0.05, critical
    // D = 30/40 = 0.75 (exact small-sample table): P(D >= 0.75) <= 0.05 while the next smaller attainable
    // value |8i - 5j|/40 = 27/40 is not significant. [C] scipy's private _attempt_exact_2kssamp(5, 8, 1, d):
    // P(D >= 0.75) = 0.04195804195804197, P(D >= 0.675) = 0.07925407925407925; tolerance 1e-13 relative.
    assertTrue(WeightedKolmogorovSmirnovTest.exactPValue(0.75, 5, 8) <= 0.05);
    assertTrue(WeightedKolmogorovSmirnovTest.exactPValue(27.0 / 40, 5, 8) > 0.05);
    assertRelative(0.04195804195804197, WeightedKolmogorovSmirnovTest.exactPValue(0.75, 5, 8), 1e-13, "p(30/40)");
    assertRelative(0.07925407925407925, WeightedKolmogorovSmirnovTest.exactPValue(0.675, 5, 8), 1e-13,
      "p(27/40)");
    // worked example (2) [Q]/[C]: n=15, m=28, alpha=0.01: critical D = 0.52079 with the exact c(0.01) =
    // 1.627624; the asymptotic p there is 0.01 (tolerance 1e-5 relative, from the 6-digit c)
    assertRelative(0.01, KolmogorovDistribution.survival(1.627624), 1e-5, "Q_KS(c)");
    assertRelative(1.627624 * Math.sqrt(43.0 / 420), 0.52079, 1e-5, "critical D");
  }

  static Stream<Cases.Case> fixture() {
    return Cases.all().stream();
  }

  @ParameterizedTest
  @MethodSource
  void fixture(Cases.Case c) {
    // two-sample-cases.txt [C]: numpy brute-force weighted D, scipy kstwobign asymptotic with Kish sizes,
    // scipy ks_2samp exact (unweighted). Tolerances: 1e-14 relative in D, 1e-12 in p.
    final WeightedKolmogorovSmirnovTest.Result r = KS.test(c.get("x"), c.get("wx"), c.get("y"), c.get("wy"));
    assertRelative(c.scalar("ks_d"), r.statistic(), 1e-14, "D " + c);
    if (c.has("ks_p_exact")) {
      assertRelative(c.scalar("ks_p_exact"), r.pValue(), 1e-12, "exact p " + c);
    } else {
      assertEquals(WeightedKolmogorovSmirnovTest.PValueMethod.ASYMPTOTIC, r.method());
    }
    final WeightedKolmogorovSmirnovTest.Result asym = KS.with(WeightedKolmogorovSmirnovTest.PValueMethod.ASYMPTOTIC)
      .test(c.get("x"), c.get("wx"), c.get("y"), c.get("wy"));
    assertRelative(c.scalar("ks_p_asymp"), asym.pValue(), 1e-12, "asymptotic p " + c);
  }

  @Test
  void integerWeightsEqualReplication() {
    // weight 2 on every reference event gives the same ECDF as duplicating them (definition): D identical
    final double[] x = {0.1, 0.7, 1.3, 2.2};
    final double[] y = {0.4, 0.9, 1.0, 3.1, -0.5};
    final double[] yy = {0.4, 0.9, 1.0, 3.1, -0.5, 0.4, 0.9, 1.0, 3.1, -0.5};
    final double[] w2 = {2, 2, 2, 2, 2};
    assertEquals(KS.statistic(x, yy), KS.statistic(x, null, y, w2), 1e-15);
    // Kish size of equal weights is the count
    assertEquals(5.0, KS.test(x, null, y, w2).effectiveReference(), 1e-12);
  }

  @Test
  void negativeWeights() {
    final double[] x = {0.1, 0.7, 1.3};
    final double[] y = {0.4, 0.9, 1.0};
    final double[] w = {1.5, -0.2, 1.0};
    final RankingArgumentException e = assertThrows(RankingArgumentException.class,
      () -> KS.statistic(x, null, y, w));
    assertTrue(e.getMessage().contains("reference weights[1]") && e.getMessage().contains("-0.2"),
      e.getMessage());
    // ALLOW: signed reference ECDF G = (0, 1.5, 1.5, 1.3, 2.3, 2.3)/2.3 and F = (1, 1, 2, 2, 2, 3)/3 at
    // (0.1, 0.4, 0.7, 0.9, 1.0, 1.3): |F - G| = (1/3, 0.319, 0.014, 0.101, 1/3, 0), max 1/3 (hand computation)
    final double d = KS.with(NegativeWeights.ALLOW).statistic(x, null, y, w);
    assertRelative(1.0 / 3, d, 1e-14, "signed D");
    assertThrows(RankingArgumentException.class,
      () -> KS.with(NegativeWeights.ALLOW).statistic(x, null, y, new double[] {1, -1, 0}));
    assertThrows(RankingArgumentException.class, () -> KS.with(WeightedKolmogorovSmirnovTest.PValueMethod.EXACT)
      .test(x, null, y, new double[] {1, 2, 1}));
    assertThrows(RankingArgumentException.class, () -> KS.statistic(new double[0], y));
    assertThrows(RankingArgumentException.class, () -> KS.statistic(new double[] {Double.NaN}, y));
    assertEquals(1.0, KS.test(new double[] {1}, new double[] {1}).pValue());
  }

  @Test
  void exactPValuesAreConservativeUnderNull() {
    // n = m = 20 normal samples, 1000 seeded experiments: the exact p-value is discrete and valid,
    // P(p <= alpha) <= alpha; tolerance: + 3 binomial sd.
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(4L);
    final ContinuousDistribution.Sampler s = NormalDistribution.of(0, 1).createSampler(rng);
    final int m = 1000;
    final double[] alphas = {0.01, 0.05, 0.1, 0.3};
    final int[] count = new int[alphas.length];
    final double[] x = new double[20];
    final double[] y = new double[20];
    for (int e = 0; e < m; e++) {
      for (int i = 0; i < 20; i++) {
        x[i] = s.sample();
        y[i] = s.sample();
      }
      final double p = KS.test(x, y).pValue();
      for (int a = 0; a < alphas.length; a++) {
        count[a] += p <= alphas[a] ? 1 : 0;
      }
    }
    for (int a = 0; a < alphas.length; a++) {
      final double bound = alphas[a] + 3 * Math.sqrt(alphas[a] * (1 - alphas[a]) / m);
      assertTrue((double) count[a] / m <= bound, "size at " + alphas[a] + ": " + count[a]);
    }
  }

  @Test
  void weightedAsymptoticCalibration() {
    // Null with a reweighted reference: x ~ N(0,1) (200 events), y ~ N(0, 1.5^2) (600 events) with weights
    // phi(y)/phi_1.5(y), so the weighted reference has the distribution of x. 600 seeded experiments.
    // Approximate theory (effective sizes): stated tolerance P(p <= 0.05) in [0.02, 0.09], P(p <= 0.2) in
    // [0.13, 0.27].
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(8L);
    final NormalDistribution target = NormalDistribution.of(0, 1);
    final NormalDistribution proposal = NormalDistribution.of(0, 1.5);
    final ContinuousDistribution.Sampler sx = target.createSampler(rng);
    final ContinuousDistribution.Sampler sy = proposal.createSampler(rng);
    final double[] x = new double[200];
    final double[] y = new double[600];
    final double[] w = new double[600];
    int c05 = 0;
    int c20 = 0;
    final int m = 600;
    for (int e = 0; e < m; e++) {
      for (int i = 0; i < x.length; i++) {
        x[i] = sx.sample();
      }
      for (int i = 0; i < y.length; i++) {
        y[i] = sy.sample();
        w[i] = target.density(y[i]) / proposal.density(y[i]);
      }
      final double p = KS.test(x, null, y, w).pValue();
      c05 += p <= 0.05 ? 1 : 0;
      c20 += p <= 0.2 ? 1 : 0;
    }
    assertTrue(c05 >= 0.02 * m && c05 <= 0.09 * m, "P(p<=0.05) = " + (double) c05 / m);
    assertTrue(c20 >= 0.13 * m && c20 <= 0.27 * m, "P(p<=0.2) = " + (double) c20 / m);
  }
}
