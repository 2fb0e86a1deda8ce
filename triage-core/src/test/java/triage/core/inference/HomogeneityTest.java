package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.distribution.PoissonSampler;
import org.apache.commons.rng.simple.RandomSource;
import org.junit.jupiter.api.Test;

/** The homogeneity test: a hand-computed case, and uniform p-values when every group has the same ratio. */
class HomogeneityTest {
  @Test
  void handComputedCase() {
    // n = (10, 30), b = (20, 20), no MC error: r = 1, χ² = 100/20 + 100/20 = 10 with 1 dof.
    Homogeneity h = Homogeneity.of(new long[] {10, 30}, new double[] {20, 20}, new double[] {0, 0});
    assertEquals(10, h.statistic(), 1e-12);
    assertEquals(1, h.dof());
    // χ²₁ tail at 10: 0.0015654022580025 (computed: 2(1 − Φ(√10))).
    assertEquals(2 * Significance.pFromZ(Math.sqrt(10)), h.pValue(), 1e-12);
  }

  @Test
  void groupsWithoutExpectationStayOutOfTheFittedRatio() {
    // n = (10, 10, 5), b = (10, 10, 0): the third group is left out, so r = 20/20 = 1 and χ² = 0 with 1 dof
    // (by hand); fitting r with its 5 events gave r = 1.25 and χ² = 1.
    Homogeneity h = Homogeneity.of(new long[] {10, 10, 5}, new double[] {10, 10, 0}, new double[] {0, 0, 0});
    assertEquals(0, h.statistic(), 1e-12);
    assertEquals(1, h.dof());
    assertEquals(1, h.pValue(), 1e-12);
    // ... and never silently: one group left out, with its 5 observed events
    assertEquals(1, h.leftOut());
    assertEquals(5, h.observedLeftOut());
    assertEquals(false, h.sparse());
    assertEquals(10, h.medianExpected(), 1e-12);
  }

  @Test
  void negativeYieldsAreLeftOutAndCountedAndSparseGroupsAreMarked() {
    // n = (2, 1, 0, 3, 4), b = (1, 2, 1, −0.5, 0) with σ² = (0.1, 0.1, 0.1, 0.3, 0): the last two are left out
    // (b ≤ 0) with 3 + 4 = 7 observed events; r = 3/4, fitted r b = (0.75, 1.5, 0.75), median 0.75; every one is
    // below 5 (and two below 1), so the χ² approximation is not to be trusted: sparse (by hand).
    Homogeneity h = Homogeneity.of(new long[] {2, 1, 0, 3, 4}, new double[] {1, 2, 1, -0.5, 0},
        new double[] {0.1, 0.1, 0.1, 0.3, 0});
    assertEquals(2, h.dof());
    assertEquals(2, h.leftOut());
    assertEquals(7, h.observedLeftOut());
    assertTrue(h.sparse());
    assertEquals(0.75, h.medianExpected(), 1e-12);
    // by hand: var_i = r b_i + r² σ_i² = (0.80625, 1.55625, 0.80625); χ² = 1.25²/0.80625 + 0.5²/1.55625
    // + 0.75²/0.80625
    assertEquals(1.5625 / 0.80625 + 0.25 / 1.55625 + 0.5625 / 0.80625, h.statistic(), 1e-12);
    // 8 groups of 10 expected each: not sparse; 3 of 8 below 5 (more than a fifth): sparse
    assertEquals(false, Homogeneity.of(new long[] {10, 10, 10, 10, 10, 10, 10, 10}, filled(8, 10, 0),
        new double[8]).sparse());
    double[] b = filled(8, 10, 3);
    assertTrue(Homogeneity.of(new long[] {10, 10, 10, 10, 10, 2, 2, 2}, b, new double[8]).sparse());
  }

  /** n values: the first n − low equal to high, the rest to 2 (or all equal to high when low is 0). */
  private static double[] filled(int n, double high, int low) {
    double[] v = new double[n];
    for (int i = 0; i < n; i++) {
      v[i] = i < n - low ? high : 2;
    }
    return v;
  }

  /**
   * Under the null (every group Poisson with mean 1.3·b_i, b_i from 20 to 160), the p-values of 2,000 fixed-seed
   * trials fall in each tenth of [0, 1] with frequency 0.1 ± 0.03 (the binomial 4.5σ band is ±0.030).
   */
  @Test
  void pValuesAreUniformUnderTheNull() {
    UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(12345L);
    double[] b = {20, 40, 60, 80, 100, 120, 140, 160};
    int[] bins = new int[10];
    int trials = 2000;
    for (int t = 0; t < trials; t++) {
      long[] n = new long[b.length];
      for (int i = 0; i < b.length; i++) {
        n[i] = PoissonSampler.of(rng, 1.3 * b[i]).sample();
      }
      double p = Homogeneity.of(n, b, new double[b.length]).pValue();
      bins[Math.min(9, (int) (p * 10))]++;
    }
    for (int k = 0; k < 10; k++) {
      assertTrue(Math.abs(bins[k] / (double) trials - 0.1) < 0.03, "bin " + k + ": " + bins[k]);
    }
  }
}
