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
    FollowUp f = FollowUp.compute(120, 100, 2, v, 60, 40);
    // By hand: max(|103 − 100|, |98 − 100|) = 3 and 4; σ_syst = 5; σ_b = √(4 + 25).
    assertEquals(5, f.systError(), 1e-12);
    assertEquals(Math.sqrt(29), f.totalError(), 1e-12);
    assertEquals(CountingSignificance.zBiFromBackground(120, 100, Math.sqrt(29)).z(), f.zBi(), 1e-12);
    assertEquals(CountingSignificance.asimovZ(20, 100, Math.sqrt(29)), f.zAsimov(), 1e-12);
    // s_pred = (60 − 40)·100/40 = 50; z = (120 − 100 − 50)/√(100 + 50 + 29).
    assertEquals(50, f.predictedSignal(), 1e-12);
    assertEquals(-30 / Math.sqrt(179), f.compatibilityZ(), 1e-12);
    // Read (2002): with n = 0 the CLs limit is ln 20 = 2.9957 for any b (CHECK-VALUES §4); tiny σ_b here.
    assertEquals(Math.log(20), FollowUp.compute(0, 3, 1e-6, Map.of(), 1, 1).clsUpperLimit95(), 1e-3);
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
