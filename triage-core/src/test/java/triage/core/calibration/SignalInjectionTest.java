package triage.core.calibration;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import triage.core.inference.ChiSquaredFit;
import triage.core.inference.ChiSquaredTail;
import triage.core.inference.Significance;
import triage.core.ratio.FitSettings;
import triage.core.ratio.StoppingRule;

/** Signal toys (sample and bump) and the median expected Z. */
class SignalInjectionTest {
  /** 2D reference of 3,000 events (seed 3), features x ~ N(0,1) and y ~ U(0,1), weights 1/30 (N_exp = 100). */
  private static final int N = 3000;

  private static double[] reference() {
    java.util.SplittableRandom r = new java.util.SplittableRandom(3);
    double[] x = new double[2 * N];
    for (int i = 0; i < N; i++) {
      x[i] = r.nextGaussian();
      x[N + i] = r.nextDouble();
    }
    return x;
  }

  private static double[] weights() {
    double[] w = new double[N];
    java.util.Arrays.fill(w, 1.0 / 30);
    return w;
  }

  /**
   * Bump construction: over 200 toys at K = 30, the injected count has mean 30 and variance 30 (Poisson; within 4
   * standard errors, sd of a sample variance ≈ √(2·30²/200)); injected x values have mean 2 and sd 0.1 (within 4
   * standard errors); injected y values are reference values (in [0, 1)); background + injected + reference events
   * account for the whole reference (carriers leave the toy's reference); the draw is reproducible.
   */
  @Test
  void bumpToysAreBackgroundPlusPoissonCarriersWithAGaussianFeature() {
    double[] ref = reference();
    double[] w = weights();
    Signal.Bump bump = new Signal.Bump("x", 0, 2, 0.1, 30);
    double s = 0;
    double s2 = 0;
    double sx = 0;
    double sx2 = 0;
    long nx = 0;
    int toys = 200;
    for (long k = 0; k < toys; k++) {
      Calibration.SignalDraw d = Calibration.drawSignal(List.of("x", "y"), ref, w, 100, 4, k, bump);
      assertEquals(N, d.background() + d.injected() + d.data().referenceCount(), "toy " + k);
      double[] obs = d.data().observed();
      int no = d.data().observedCount();
      assertEquals(d.background() + d.injected(), no);
      for (int i = d.background(); i < no; i++) {
        sx += obs[i];
        sx2 += obs[i] * obs[i];
        nx++;
        assertTrue(obs[no + i] >= 0 && obs[no + i] < 1, "y of an injected event comes from the reference");
      }
      s += d.injected();
      s2 += (double) d.injected() * d.injected();
    }
    double mean = s / toys;
    assertEquals(30, mean, 4 * Math.sqrt(30.0 / toys));
    assertEquals(30, s2 / toys - mean * mean, 4 * Math.sqrt(2 * 30.0 * 30.0 / toys));
    double mx = sx / nx;
    assertEquals(2, mx, 4 * 0.1 / Math.sqrt(nx));
    assertEquals(0.1, Math.sqrt(sx2 / nx - mx * mx), 4 * 0.1 / Math.sqrt(2.0 * nx));
    assertArrayEquals(Calibration.drawSignal(List.of("x", "y"), ref, w, 100, 4, 7, bump).data().observed(),
        Calibration.drawSignal(List.of("x", "y"), ref, w, 100, 4, 7, bump).data().observed());
  }

  /** Sample injection takes Poisson(K) events of the other sample (mean within 4 standard errors over 200 toys). */
  @Test
  void sampleToysDrawFromTheOtherSample() {
    double[] ref = reference();
    double[] w = weights();
    int m = 500;
    double[] sig = new double[2 * m];
    double[] sw = new double[m];
    for (int i = 0; i < m; i++) {
      sig[i] = 5 + i * 1e-3;
      sig[m + i] = 0.5;
      sw[i] = 1;
    }
    Signal.FromSample sample = new Signal.FromSample("sig", sig, sw, 20);
    double s = 0;
    for (long k = 0; k < 200; k++) {
      Calibration.SignalDraw d = Calibration.drawSignal(List.of("x", "y"), ref, w, 100, 4, k, sample);
      double[] obs = d.data().observed();
      int no = d.data().observedCount();
      for (int i = d.background(); i < no; i++) {
        assertTrue(obs[i] >= 5 && obs[no + i] == 0.5, "injected events come from the signal sample");
      }
      assertEquals(N, d.background() + d.data().referenceCount());
      s += d.injected();
    }
    assertEquals(20, s / 200, 4 * Math.sqrt(20.0 / 200));
    assertThrows(IllegalArgumentException.class, () -> new Signal.Bump("x", 0, 1, 0, 5));
    assertThrows(IllegalArgumentException.class, () -> new Signal.FromSample("s", sig, sw, -1));
  }

  /**
   * Fitted signal toys sit above null toys: a 1-2-1 network on 1D (3,000 reference, N_exp = 100), 15 null and 15
   * signal toys with a bump of K = 40 at x = 2 (σ 0.1); the median signal t exceeds every null toy, so the median
   * expected Z comes from the fitted χ² and is above 3 (a bump of 40 events is a strong signal: the reference
   * expects about 2 events within ±2σ of the peak, where 38 of the 40 fall).
   */
  @Test
  void injectedSignalGivesALargeMedianZ() throws Exception {
    java.util.SplittableRandom r = new java.util.SplittableRandom(6);
    double[] ref = new double[N];
    for (int i = 0; i < N; i++) {
      ref[i] = r.nextGaussian();
    }
    FitSettings s = FitSettings.defaults().withHiddenWidths(List.of(2)).withClip(4).withThreads(1)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(200));
    long[] idx = new long[15];
    for (int i = 0; i < idx.length; i++) {
      idx[i] = i;
    }
    double[] nulls = Calibration.run(List.of("x"), ref, weights(), 100, s, 1, idx, e -> { }).stream()
        .mapToDouble(ToyLog.Entry::t).toArray();
    double[] signal = Calibration.runWithSignal(List.of("x"), ref, weights(), 100, s, 1, idx,
        new Signal.Bump("x", 0, 2, 0.1, 40), e -> { }).stream().mapToDouble(ToyLog.SignalToy::t).toArray();
    Calibration.Sensitivity sens = Calibration.sensitivity(signal, nulls, 7);
    assertEquals(Calibration.ZSource.FITTED_CHI2, sens.source(), sens.statement());
    assertTrue(sens.zMedian() > 3, sens.statement());
  }

  /** The three sources of the median Z, by hand from the definitions. */
  @Test
  void sensitivitySources() {
    double[] nulls = new double[19];
    for (int i = 0; i < nulls.length; i++) {
      nulls[i] = 1 + i; // 1 .. 19
    }
    // Median signal t = 15: null toys 15..19 reach it, k = 5, p = 6/20 (empirical estimator (k+1)/(N+1)).
    Calibration.Sensitivity e = Calibration.sensitivity(new double[] {14, 15, 16}, nulls, 7);
    assertEquals(Calibration.ZSource.EMPIRICAL, e.source());
    assertEquals(0.3, e.pMedian(), 1e-15);
    assertEquals(Significance.zFromP(0.3), e.zMedian(), 0.0);
    // Power at 0.05: t = 14, 15, 16 have p = 7/20, 6/20, 5/20, none ≤ 0.05.
    assertEquals(0, e.power(), 0.0);
    // Beyond every null toy: the fitted χ².
    Calibration.Sensitivity f = Calibration.sensitivity(new double[] {50, 60, 70}, nulls, 7);
    assertEquals(Calibration.ZSource.FITTED_CHI2, f.source());
    assertEquals(ChiSquaredFit.withDefaults().fit(nulls).pValue(60), f.pMedian(), 0.0);
    assertEquals(1, f.power(), 0.0);
    // Fewer than 10 null toys: χ²(parameter count).
    Calibration.Sensitivity w = Calibration.sensitivity(new double[] {50}, new double[] {1, 2}, 7);
    assertEquals(Calibration.ZSource.PARAMETER_CHI2, w.source());
    assertEquals(ChiSquaredTail.pValue(50, 7), w.pMedian(), 0.0);
    assertTrue(Double.isNaN(w.power()));
    // Far past every null toy p underflows to 0; Z still comes out finite, from ln p (ChiSquaredTail.z, checked
    // against mpmath in ChiSquaredTailTest), and the statement never says "Infinity".
    Calibration.Sensitivity far = Calibration.sensitivity(new double[] {5000}, new double[] {1, 2}, 7);
    assertEquals(0.0, far.pMedian(), 0.0);
    assertEquals(ChiSquaredTail.z(5000, 7), far.zMedian(), 0.0);
    assertTrue(Double.isFinite(far.zMedian()) && far.zMedian() > 60, "Z = " + far.zMedian());
    assertTrue(!far.statement().contains("Infinity"), far.statement());
  }
}
