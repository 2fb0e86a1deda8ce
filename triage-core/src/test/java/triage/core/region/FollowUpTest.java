package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import triage.core.inference.CountingSignificance;

/** The follow-up statistics and the id set of the overlap guard. */
class FollowUpTest {
  /**
   * Analytic: with no background uncertainty the Asimov significance scales as √k when s and b scale by k, so the
   * growth for 5σ is (5/Z_A)². Z_A(s=10, b=10) = 2.779548025 (CHECK-VALUES §2, computed) gives k = 3.2360.
   */
  @Test
  void growthForFiveSigmaScalesAsTheSquare() {
    double z = CountingSignificance.asimovZ(10, 10);
    assertEquals(2.779548025, z, 1e-9);
    assertEquals(Math.pow(5 / z, 2), FollowUp.growthFor5Sigma(10, 10, 0, 0), 1e-6);
    // Systematics that do not shrink with k cap the reach: s/b = 1% against a 5% systematic never reaches 5σ.
    assertTrue(Double.isNaN(FollowUp.growthFor5Sigma(1, 100, 0, 5)));
    assertTrue(Double.isNaN(FollowUp.growthFor5Sigma(-1, 100, 1, 0)));
  }

  @Test
  void systematicsAddInQuadratureAndTheLimitMatchesCls() {
    Map<String, double[]> v = Map.of("a", new double[] {103, 98}, "b", new double[] {96, 104});
    FollowUp f = FollowUp.compute(120, 100, 2, v, 60, 40, 3);
    // By hand: max(|103 − 100|, |98 − 100|) = 3 and 4; σ_syst = 5; σ_b = √(4 + 25).
    assertEquals(5, f.systError(), 1e-12);
    assertEquals(Math.sqrt(29), f.totalError(), 1e-12);
    assertEquals(CountingSignificance.zBiFromBackground(120, 100, Math.sqrt(29)).z(), f.zBi(), 1e-12);
    assertEquals(CountingSignificance.asimovZ(20, 100, Math.sqrt(29)), f.zAsimov(), 1e-12);
    // s_pred = (60 − 40)·100/40 = 50; σ_z² = (100 + 50) + (60/40)²·2² + (100/40)²·60 + (100·60/40²)²·3²
    // = 150 + 9 + 375 + 126.5625 = 660.5625 (by hand); z = (120 − 100 − 50)/√660.5625.
    assertEquals(50, f.predictedSignal(), 1e-12);
    assertEquals(-30 / Math.sqrt(660.5625), f.compatibilityZ(), 1e-12);
    // A scale shift is one more systematic in quadrature: by hand max(|112 − 100|, |100 − 100|) = 12, so σ_syst =
    // √(9 + 16 + 144) = 13; the compatibility z does not use σ_syst.
    FollowUp scaled = FollowUp.compute(120, 100, 2, v, Map.of("s", new double[] {112, 100}), 60, 40, 3);
    assertEquals(13, scaled.systError(), 1e-12);
    assertEquals(Math.sqrt(4 + 169), scaled.totalError(), 1e-12);
    assertArrayEquals(new double[] {112, 100}, scaled.scales().get("s"));
    assertEquals(f.compatibilityZ(), scaled.compatibilityZ(), 0);
    // CLs (J. Phys. G 28 (2002) 2693): with n = 0 the CLs limit is ln 20 = 2.9957 for any b (CHECK-VALUES §4);
    // tiny σ_b here.
    assertEquals(Math.log(20), FollowUp.compute(0, 3, 1e-6, Map.of(), 1, 1, 0).clsUpperLimit95(), 1e-3);
  }

  /**
   * When the follow-up agrees with the discovery, z is close to a standard normal variable (analytic, to first
   * order: a combination of independent fluctuations divided by its standard deviation). 20,000 seeded pairs of
   * experiments with b_d = 40, s_d = 20, b = 100 (so s = 50), MC errors σ_stat = 5 and σ_d = 2, both estimated
   * backgrounds scattered by their errors: standard deviation within 0.03 of 1 (sampling error about 0.005; the
   * rest is room for second-order terms) and mean within 0.1 of 0 (measured 0.076: the variance is estimated from
   * the same counts, so a high n_d both lowers the numerator and widens the denominator). Leaving out
   * the variance of s_pred gave a standard deviation of about 1.5, and the first correction (b/b_d)²(n_d + σ_d²)
   * about 1.07.
   */
  @Test
  void compatibilityIsStandardNormalWhenFollowUpAndDiscoveryAgree() {
    org.apache.commons.rng.UniformRandomProvider r = org.apache.commons.rng.simple.RandomSource.SPLIT_MIX_64
        .create(12);
    var gauss = org.apache.commons.rng.sampling.distribution.ZigguratSampler.NormalizedGaussian.of(r);
    int sets = 20_000;
    double sum = 0;
    double sum2 = 0;
    for (int k = 0; k < sets; k++) {
      long nd = org.apache.commons.rng.sampling.distribution.PoissonSampler.of(r, 60).sample();
      long n = org.apache.commons.rng.sampling.distribution.PoissonSampler.of(r, 150).sample();
      // the estimated backgrounds scatter around the true ones by their errors
      double bd = 40 + 2 * gauss.sample();
      double b = 100 + 5 * gauss.sample();
      double z = FollowUp.compatibilityZ(n, b, 5, nd, bd, 2);
      sum += z;
      sum2 += z * z;
    }
    double mean = sum / sets;
    double sd = Math.sqrt(sum2 / sets - mean * mean);
    assertEquals(0, mean, 0.1, "sd " + sd);
    assertEquals(1, sd, 0.03);
  }

  @Test
  void idSetRoundTripsAndCountsOverlap() {
    SplittableRandom r = new SplittableRandom(9);
    long[] ids = new long[5000];
    for (int i = 0; i < ids.length; i++) {
      ids[i] = r.nextLong(-1_000_000_000L, 1_000_000_000L);
    }
    IdSet set = IdSet.of(ids);
    long[] sorted = java.util.Arrays.stream(ids).distinct().sorted().toArray();
    assertEquals(sorted.length, set.count());
    assertArrayEquals(sorted, set.ids());
    assertEquals(2, set.overlap(new long[] {ids[3], 1_500_000_000L, ids[77]}));
    IdSet copy = new IdSet(set.count(), set.sha256(), set.data());
    assertEquals(set, copy);
    assertThrows(IllegalArgumentException.class, () -> new IdSet(set.count(), "00", set.data()));
    assertArrayEquals(new long[] {Long.MIN_VALUE, 0, Long.MAX_VALUE},
        IdSet.of(new long[] {Long.MAX_VALUE, 0, Long.MIN_VALUE, 0}).ids());
  }
}
