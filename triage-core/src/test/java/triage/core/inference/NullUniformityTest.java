package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import org.apache.commons.statistics.distribution.ContinuousDistribution;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.apache.commons.statistics.distribution.PoissonDistribution;
import org.junit.jupiter.api.Test;

/**
 * Calibration of the package's p-values under the null hypothesis: uniform (continuous statistics) or
 * conservative, {@code P(p <= alpha) <= alpha} (discrete counts), with fixed seeds and stated tolerances.
 */
class NullUniformityTest {
  private static final double[] ALPHAS = {0.01, 0.05, 0.1, 0.5};

  /** Pearson chi-squared p-value of counts in equal-probability bins. */
  private static double pearsonPValue(int[] counts, int total) {
    final double expected = (double) total / counts.length;
    double x2 = 0;
    for (final int c : counts) {
      x2 += (c - expected) * (c - expected) / expected;
    }
    return ChiSquaredTail.pValue(x2, counts.length - 1);
  }

  /** Asserts P(p <= alpha) within 4 binomial standard deviations of alpha for each alpha. */
  private static void assertUniformFractions(double[] p, String what) {
    for (final double a : ALPHAS) {
      int k = 0;
      for (final double v : p) {
        if (v <= a + 1e-12) {
          k++;
        }
      }
      final double frac = (double) k / p.length;
      final double sd = Math.sqrt(a * (1 - a) / p.length);
      assertTrue(Math.abs(frac - a) <= 4 * sd, what + ": P(p<=" + a + ") = " + frac);
    }
  }

  @Test
  void toyPValuesOfChiSquaredToysAreUniform() {
    // 2000 experiments, each: 99 toys from chi2_3 and one observed chi2_3 draw; p = (k+1)/(N+1) takes the
    // values j/100 with probability 1/100 each (exchangeability). Tolerances: P(p <= alpha) within 4 binomial
    // sd of alpha; Pearson chi2 of 10 equal bins has p-value > 1e-3; seed 2024.
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(2024L);
    final ContinuousDistribution.Sampler chi2 = ChiSquaredDistribution.of(3).createSampler(rng);
    final EmpiricalPValue emp = EmpiricalPValue.withDefaults();
    final int m = 2000;
    final double[] p = new double[m];
    final int[] bins = new int[10];
    final double[] toys = new double[99];
    for (int e = 0; e < m; e++) {
      for (int i = 0; i < toys.length; i++) {
        toys[i] = chi2.sample();
      }
      final EmpiricalPValue.Result r = emp.test(toys, chi2.sample());
      // k = 0 is reported as the bound 1/N; the estimator value is (0+1)/(N+1) = 0.01
      p[e] = r.bound() == EmpiricalPValue.Bound.UPPER_BOUND ? 1.0 / (toys.length + 1) : r.pValue();
      bins[Math.min(9, (int) Math.ceil(p[e] * 10 - 1e-9) - 1)]++;
    }
    assertUniformFractions(p, "toy p-values");
    assertTrue(pearsonPValue(bins, m) > 1e-3, "binned uniformity");
  }

  @Test
  void oneSampleKsPValuesAreUniform() {
    // 1000 samples of 50 standard normals tested against Phi with the exact distribution: the p-values are
    // U(0,1). Tolerances: KS of the p-values against U(0,1) has p > 1e-3; fractions within 4 sd; seed 99.
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(99L);
    final NormalDistribution normal = NormalDistribution.of(0, 1);
    final ContinuousDistribution.Sampler s = normal.createSampler(rng);
    final OneSampleKolmogorovSmirnovTest ks = OneSampleKolmogorovSmirnovTest.withDefaults();
    final double[] p = new double[1000];
    final double[] x = new double[50];
    for (int e = 0; e < p.length; e++) {
      for (int i = 0; i < x.length; i++) {
        x[i] = s.sample();
      }
      p[e] = ks.test(x, normal::cumulativeProbability).pValue();
    }
    assertUniformFractions(p, "KS p-values");
    assertTrue(ks.test(p, v -> v).pValue() > 1e-3, "KS of p-values");
  }

  @Test
  void chiSquaredAsymptoticPValuesAreUniform() {
    // Wilks' theorem in an exact case: t ~ chi2_4, p = Q(t|4) is U(0,1). 2000 draws, seed 7, fractions
    // within 4 sd and KS p > 1e-3.
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(7L);
    final ContinuousDistribution.Sampler chi2 = ChiSquaredDistribution.of(4).createSampler(rng);
    final double[] p = new double[2000];
    for (int i = 0; i < p.length; i++) {
      p[i] = ChiSquaredTail.pValue(chi2.sample(), 4);
    }
    assertUniformFractions(p, "chi2 p-values");
    assertTrue(OneSampleKolmogorovSmirnovTest.withDefaults().test(p, v -> v).pValue() > 1e-3);
  }

  @Test
  void poissonPValueIsConservative() {
    // n ~ Pois(b), p = P(N >= n | b) (Z_Bi at sigma_b = 0): P(p <= alpha) <= alpha exactly, computed by
    // summation over n (no randomness); tolerance 1e-12.
    for (final double b : new double[] {0.5, 3, 20, 100}) {
      final PoissonDistribution pois = PoissonDistribution.of(b);
      for (final double a : new double[] {1e-3, 0.01, 0.05, 0.1, 0.3}) {
        double size = 0;
        for (int n = 0; n < 400; n++) {
          if (CountingSignificance.zBiFromBackground(n, b, 0).pValue() <= a) {
            size += pois.probability(n);
          }
        }
        assertTrue(size <= a + 1e-12, "size " + size + " > " + a + " at b=" + b);
      }
    }
  }

  @Test
  void zBiIsConservativeOnOff() {
    // on/off null: n_on ~ Pois(b), n_off ~ Pois(tau b). Conditioned on n_on + n_off the binomial test is
    // exact-conservative (Nucl. Instrum. Meth. A 595 (2008) 480), so P(p_Bi <= alpha) <= alpha; computed by double
    // summation (truncation error < 1e-12); tolerance 1e-9.
    final double b = 4;
    final double tau = 2;
    final PoissonDistribution on = PoissonDistribution.of(b);
    final PoissonDistribution off = PoissonDistribution.of(tau * b);
    for (final double a : new double[] {0.01, 0.05, 0.1}) {
      double size = 0;
      for (int i = 0; i < 40; i++) {
        for (int j = 0; j < 60; j++) {
          if (CountingSignificance.zBi(i, j, tau).pValue() <= a) {
            size += on.probability(i) * off.probability(j);
          }
        }
      }
      assertTrue(size <= a + 1e-9, "size " + size + " at alpha " + a);
    }
  }

  @Test
  void likelihoodRatioPValueIsApproximatelyCalibrated() {
    // n ~ Pois(b = 100): the asymptotic one-sided p = 1 - Phi(Z_LR) has exact size P(p <= alpha) (summed
    // over n) close to alpha; Wilks/Chernoff asymptotics with a discrete count. Tolerance stated: size within
    // [0.5 alpha, 1.5 alpha] for alpha in {0.01, 0.05, 0.1}.
    final double b = 100;
    final PoissonDistribution pois = PoissonDistribution.of(b);
    for (final double a : new double[] {0.01, 0.05, 0.1}) {
      double size = 0;
      for (int n = 0; n < 400; n++) {
        if (Significance.pFromZ(CountingSignificance.likelihoodRatioZ(n, b)) <= a) {
          size += pois.probability(n);
        }
      }
      assertTrue(size >= 0.5 * a && size <= 1.5 * a, "size " + size + " at alpha " + a);
    }
  }
}
