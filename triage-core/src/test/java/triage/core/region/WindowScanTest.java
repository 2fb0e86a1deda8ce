package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import triage.core.inference.CountingSignificance;

class WindowScanTest {
  @Test
  void theNumberOfWindowsIsTheCountOfContiguousRuns() {
    // Analytic: bins − k + 1 windows of width k, summed over k.
    assertEquals(60 + 59 + 58 + 57 + 56, new WindowScan.Grid(0, 1, 60, 1, 5).windows());
    assertEquals(1, new WindowScan.Grid(0, 1, 7, 7, 7).windows());
    assertEquals(7 * 8 / 2, new WindowScan.Grid(0, 1, 7, 1, 7).windows());
  }

  @Test
  void everyWindowIsCountedLikeADirectLoopOverTheEvents() {
    SplittableRandom r = new SplittableRandom(11);
    double[] obs = new double[500];
    double[] ref = new double[4000];
    double[] w = new double[ref.length];
    for (int i = 0; i < obs.length; i++) {
      obs[i] = r.nextDouble() * 12 - 1;
    }
    for (int i = 0; i < ref.length; i++) {
      ref[i] = r.nextDouble() * 12 - 1;
      w[i] = 0.05 + 0.2 * r.nextDouble();
    }
    WindowScan.Grid g = new WindowScan.Grid(0, 10, 20, 2, 6);
    WindowScan.Result res = WindowScan.scan(obs, ref, w, g, 3);
    assertEquals(g.windows(), res.windowsTried());
    WindowScan.Window b = res.best();
    long n = 0;
    double e = 0;
    double e2 = 0;
    for (double x : obs) {
      n += x >= b.lo() && x < b.hi() ? 1 : 0;
    }
    for (int i = 0; i < ref.length; i++) {
      if (ref[i] >= b.lo() && ref[i] < b.hi()) {
        e += w[i];
        e2 += w[i] * w[i];
      }
    }
    assertEquals(n, b.observed());
    assertEquals(e, b.expected(), 1e-9);
    assertEquals(Math.sqrt(e2), b.expectedError(), 1e-9);
    assertEquals(CountingSignificance.zBiFromBackground(n, e, Math.sqrt(e2)).z(), b.localZ(), 1e-12);
    long outside = 0;
    for (double x : obs) {
      outside += x < 0 || x > 10 ? 1 : 0;
    }
    assertEquals(outside, res.outsideRange());
    for (int i = 1; i < res.top().size(); i++) {
      WindowScan.Window a = res.top().get(i);
      for (int j = 0; j < i; j++) {
        WindowScan.Window c = res.top().get(j);
        assertTrue(a.hi() <= c.lo() || c.hi() <= a.lo(), "reported windows do not overlap");
        assertTrue(a.localZ() <= c.localZ());
      }
    }
  }

  /**
   * Values exactly on an edge belong to the bin that starts there, as the reported [lo, hi) says: 30 observed
   * events at 58 on a 0..200 grid of 100 bins (where (58 − 0)/200·100 rounds to 28.999…) are counted in the window
   * that starts at 58, and the direct count over the reported best window agrees.
   */
  @Test
  void valuesOnAnEdgeFallInTheWindowThatStartsThere() {
    double[] obs = new double[30];
    java.util.Arrays.fill(obs, 58.0);
    double[] ref = new double[2000];
    double[] w = new double[ref.length];
    for (int i = 0; i < ref.length; i++) {
      ref[i] = 0.05 + 0.1 * i;
      w[i] = 0.01;
    }
    WindowScan.Grid g = new WindowScan.Grid(0, 200, 100, 1, 1);
    WindowScan.Window b = WindowScan.scan(obs, ref, w, g, 1).best();
    assertEquals(58.0, b.lo(), 0.0);
    assertEquals(60.0, b.hi(), 0.0);
    assertEquals(30, b.observed());
    double e = 0;
    for (int i = 0; i < ref.length; i++) {
      e += ref[i] >= b.lo() && ref[i] < b.hi() ? w[i] : 0;
    }
    assertEquals(e, b.expected(), 1e-12);
  }

  @Test
  void aGaussianBumpIsFoundWhereItWasPut() {
    SplittableRandom r = new SplittableRandom(3);
    double[] obs = new double[2080];
    double[] ref = new double[20_000];
    double[] w = new double[ref.length];
    for (int i = 0; i < ref.length; i++) {
      ref[i] = -100 * Math.log(1 - r.nextDouble());
      w[i] = 0.1;
    }
    for (int i = 0; i < 2000; i++) {
      obs[i] = -100 * Math.log(1 - r.nextDouble());
    }
    for (int i = 2000; i < obs.length; i++) {
      obs[i] = 250 + 10 * r.nextGaussian();
    }
    WindowScan.Result res = WindowScan.scan(obs, ref, w, new WindowScan.Grid(0, 600, 60, 1, 5), 3);
    assertTrue(res.best().lo() <= 250 && res.best().hi() >= 250, "the window holds the bump's mean: " + res.best());
    assertTrue(res.best().hi() - res.best().lo() <= 50);
    assertTrue(res.bonferroniZ() > 3, "80 events on about 10 expected: " + res.bonferroniZ());
    assertTrue(res.bonferroniZ() < res.best().localZ());
  }

  /**
   * Under no signal the Bonferroni bound is conservative: P(p_global ≤ α) ≤ α. 400 null datasets, seeds
   * fixed; the observed rate at α = 0.05 must not exceed 0.05 by more than 2.5 binomial standard deviations
   * (0.027), and the local p of the best window must be far from uniform (the look-elsewhere effect itself).
   */
  @Test
  void theGlobalBoundIsConservativeWithoutASignalWhileTheLocalPIsNot() {
    int datasets = 400;
    int globalHits = 0;
    int localHits = 0;
    for (int d = 0; d < datasets; d++) {
      SplittableRandom r = new SplittableRandom(1000 + d);
      double[] ref = new double[10_000];
      double[] w = new double[ref.length];
      for (int i = 0; i < ref.length; i++) {
        ref[i] = r.nextDouble();
        w[i] = 0.1;
      }
      int n = poisson(r, 1000);
      double[] obs = new double[n];
      for (int i = 0; i < n; i++) {
        obs[i] = r.nextDouble();
      }
      WindowScan.Result res = WindowScan.scan(obs, ref, w, new WindowScan.Grid(0, 1, 20, 1, 4), 1);
      globalHits += res.bonferroniP() <= 0.05 ? 1 : 0;
      localHits += res.best().localP() <= 0.05 ? 1 : 0;
    }
    double sd = Math.sqrt(0.05 * 0.95 / datasets);
    assertTrue(globalHits / (double) datasets <= 0.05 + 2.5 * sd, "global rate " + globalHits / (double) datasets);
    assertTrue(localHits / (double) datasets > 0.3, "best-of-74 local rate " + localHits / (double) datasets);
  }

  @Test
  void binsWithoutReferenceAreNotTriedButTheirEventsAreCounted() {
    // Reference only on [0, 0.5); ten observed events at 0.9 where there is no expectation at all.
    double[] ref = new double[1000];
    double[] w = new double[ref.length];
    for (int i = 0; i < ref.length; i++) {
      ref[i] = 0.5 * i / ref.length;
      w[i] = 0.1;
    }
    double[] obs = new double[110];
    for (int i = 0; i < 100; i++) {
      obs[i] = 0.5 * i / 100;
    }
    java.util.Arrays.fill(obs, 100, 110, 0.9);
    WindowScan.Result res = WindowScan.scan(obs, ref, w, new WindowScan.Grid(0, 1, 10, 1, 2), 3);
    assertEquals(10, res.observedWithoutReference());
    // Windows that touch a bin with reference: 5 of width 1 and 5 of width 2 (the one from bin 4 to 5 included).
    assertEquals(10, res.windowsTried());
    assertTrue(res.best().hi() <= 0.6 + 1e-12, res.best().toString());
    assertThrows(IllegalArgumentException.class, () -> WindowScan.scan(new double[] {0.9}, new double[] {0.1},
        new double[] {1}, new WindowScan.Grid(0.5, 1, 5, 1, 2), 1));
  }

  @Test
  void badGridsAreRefusedWithTheReason() {
    assertThrows(IllegalArgumentException.class, () -> new WindowScan.Grid(0, 1, 100_000, 1, 100_000));
    assertThrows(IllegalArgumentException.class, () -> new WindowScan.Grid(1, 1, 10, 1, 2));
    assertThrows(IllegalArgumentException.class, () -> new WindowScan.Grid(0, 1, 10, 3, 2));
    assertThrows(IllegalArgumentException.class, () -> new WindowScan.Grid(0, 1, 10, 1, 11));
  }

  private static int poisson(SplittableRandom r, double mean) {
    // The product-of-uniforms method, summed in log space.
    double l = -mean;
    double sum = 0;
    int k = 0;
    while (true) {
      sum += Math.log(r.nextDouble());
      if (sum < l) {
        return k;
      }
      k++;
    }
  }
}
