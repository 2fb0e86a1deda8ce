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

  /**
   * Null datasets built from weighted events, as breakdown builds its table: K = 30 groups; group g of the reference
   * holds a Poisson number, of mean m_g = (3 + g mod 5)·k, of events with weights uniform on [0.1, 0.9]/k (so
   * b_g ≈ 1.5–3.5 whatever k, and σ_g² = Σw² estimates Var(b_g) for Poisson counts); the observed counts are
   * n_g ~ Poisson(0.5 (3 + g mod 5)), the true expectation that b_g estimates. Every table is sparse (r·b_g below
   * 5). Returns the Monte Carlo p-values (199 tables each) and the χ² approximation's, per dataset.
   */
  private static double[][] sparseNullPValues(int k, int datasets, long seed) {
    UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(seed);
    int groups = 30;
    double[] mc = new double[datasets];
    double[] asymptotic = new double[datasets];
    for (int e = 0; e < datasets; e++) {
      long[] n = new long[groups];
      double[] b = new double[groups];
      double[] v = new double[groups];
      for (int g = 0; g < groups; g++) {
        double mean = 3 + g % 5;
        long events = PoissonSampler.of(rng, mean * k).sample();
        double sum = 0;
        double sum2 = 0;
        for (int i = 0; i < events; i++) {
          double w = (0.1 + 0.8 * rng.nextDouble()) / k;
          sum += w;
          sum2 += w * w;
        }
        b[g] = sum;
        v[g] = sum2;
        n[g] = PoissonSampler.of(rng, 0.5 * mean).sample();
      }
      Homogeneity h = Homogeneity.of(n, b, v);
      assertTrue(h.sparse(), "the case is meant to be sparse");
      asymptotic[e] = h.pValue();
      mc[e] = Homogeneity.monteCarloP(n, b, v, 199, seed * 100_000 + e);
    }
    return new double[][] {mc, asymptotic};
  }

  /**
   * The usual case, a reference ten times the observed sample (k = 10): the Monte Carlo p-values of 400 sparse null
   * tables are uniform, P(p ≤ α) within 4 binomial standard deviations of α for α = 0.05, 0.1, 0.5, seed 11. Over
   * 3,000 tables (measured once on 2026-12-04, with an earlier seeding of the same generator): 0.048, 0.103, 0.496,
   * where the χ² approximation gave 0.073, 0.125,
   * 0.521.
   */
  @Test
  void monteCarloPValuesAreUniformForSparseTablesAgainstALargeReference() {
    double[][] p = sparseNullPValues(10, 400, 11L);
    for (double a : new double[] {0.05, 0.1, 0.5}) {
      double frac = fraction(p[0], a);
      double sd = Math.sqrt(a * (1 - a) / p[0].length);
      assertTrue(Math.abs(frac - a) <= 4 * sd, "P(p <= " + a + ") = " + frac);
    }
  }

  /**
   * A reference only twice the observed sample (k = 1), where its own fluctuations dominate: the Monte Carlo
   * p-value can come out somewhat small (the bootstrap takes the estimated yields for the true ones), but far closer
   * than the χ² approximation. Over 3,000 tables (measured once on 2026-12-04, with an earlier seeding of the same
   * generator): P(p ≤ 0.05) = 0.065 and P(p ≤ 0.1) = 0.142, against 0.479 and 0.552 for χ²; a review's own
   * implementation found 0.049–0.059 at α = 0.05 over 2,000 datasets with 999 tables each. Asserted on 400
   * tables, seed 12: P(p ≤ α) ≤ 1.6 α + 4 binomial standard deviations for α = 0.05 and 0.1, and the χ² approximation at least three times worse at α = 0.05.
   */
  @Test
  void monteCarloPValuesStayCloseWhenTheReferenceIsSmall() {
    double[][] p = sparseNullPValues(1, 400, 12L);
    for (double a : new double[] {0.05, 0.1}) {
      double frac = fraction(p[0], a);
      double sd = Math.sqrt(a * (1 - a) / p[0].length);
      assertTrue(frac <= 1.6 * a + 4 * sd, "P(p <= " + a + ") = " + frac);
    }
    assertTrue(fraction(p[1], 0.05) >= 3 * fraction(p[0], 0.05), "chi2 " + fraction(p[1], 0.05));
  }

  /** No observed event where there is reference weight: no test, and only the values without weight left out. */
  @Test
  void withoutObservedEventsOnlyValuesWithoutWeightAreLeftOut() {
    // n = (0, 0, 4), b = (1.5, 2, 0): r = 0 over the groups with b > 0, so no statistic; the third group (b = 0,
    // 4 events) is the only one left out (it said 3 groups before)
    Homogeneity h = Homogeneity.of(new long[] {0, 0, 4}, new double[] {1.5, 2, 0}, new double[] {0.2, 0.3, 0});
    assertTrue(Double.isNaN(h.statistic()));
    assertEquals(1, h.leftOut());
    assertEquals(4, h.observedLeftOut());
  }

  /**
   * Edge cases found in review: a group whose negative weights nearly cancel (effective count b²/σ² = 5e-5) says
   * nothing about its expectation and is left out (with it, p = 0.012 and "somewhat uneven"; with b₃ = 0.3 instead,
   * 0.23); tables without an observed event are not counted (one event in five equal groups: every table of one
   * event is as extreme, those of two or more may be less, so p = 0.42 here, where counting the empty tables as
   * not extreme gave 0.30); means beyond the Poisson
   * sampler's range (2^30) draw a normal.
   */
  @Test
  void reviewEdgeCases() {
    Homogeneity h = Homogeneity.of(new long[] {50, 40, 4}, new double[] {50, 40, 0.01}, new double[] {5, 4, 2});
    assertEquals(1, h.leftOut());
    assertEquals(4, h.observedLeftOut());
    assertEquals(1, h.dof());
    assertEquals(0, h.statistic(), 1e-12); // r = 90/90 = 1, both groups exactly on it
    double one = Homogeneity.monteCarloP(new long[] {1, 0, 0, 0, 0}, new double[] {1, 1, 1, 1, 1},
        new double[] {0.01, 0.01, 0.01, 0.01, 0.01}, 999, 5L);
    assertTrue(one > 0.35, "p = " + one);
    double huge = Homogeneity.monteCarloP(new long[] {1_500_000_000L, 1_500_100_000L},
        new double[] {1.5e9, 1.5e9}, new double[] {1e6, 1e6}, 99, 6L);
    assertTrue(huge > 0 && huge <= 1, "p = " + huge);
  }

  /**
   * Where the χ² approximation holds (r·b_i about 200 in each of 8 groups, small MC errors) the bootstrap agrees
   * with it: the χ²(7) tail of the same statistic, within 4 Monte Carlo standard errors of 4,999 tables (analytic
   * reference: the statistic is χ²(k − 1) asymptotically). Same seed, same value.
   */
  @Test
  void monteCarloAgreesWithTheChiSquaredTailWhereItHolds() {
    long[] n = {212, 190, 205, 230, 181, 199, 215, 188};
    double[] b = {200, 200, 200, 200, 200, 200, 200, 200};
    double[] v = {4, 4, 4, 4, 4, 4, 4, 4};
    Homogeneity h = Homogeneity.of(n, b, v);
    double p = Homogeneity.monteCarloP(n, b, v, 4999, 3L);
    double se = Math.sqrt(h.pValue() * (1 - h.pValue()) / 4999);
    assertEquals(h.pValue(), p, 4 * se + 1.0 / 5000, "chi2 " + h.pValue() + " against Monte Carlo " + p);
    assertEquals(p, Homogeneity.monteCarloP(n, b, v, 4999, 3L), 0.0);
    // too few groups: NaN, as the statistic
    assertTrue(Double.isNaN(Homogeneity.monteCarloP(new long[] {3}, new double[] {2}, new double[] {1}, 9, 1L)));
  }

  private static double fraction(double[] p, double a) {
    int k = 0;
    for (double x : p) {
      k += x <= a + 1e-12 ? 1 : 0;
    }
    return (double) k / p.length;
  }
}
