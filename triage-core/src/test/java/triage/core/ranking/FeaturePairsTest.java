package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** The 2D pair ranking against analytic cases. */
class FeaturePairsTest {
  @Test
  void aFlippedCorrelationIsInvisibleInEachFeatureButMaximalInThePair() {
    // Reference: y = x; observed: y = 1 − x, on the same grid of x. Each feature has exactly the same values on
    // both sides (JS 0), while on an even grid of quantile bins the diagonal and the anti-diagonal share no cell:
    // the 2D divergence is the maximum, ln 2 (analytic). z is the same on both sides, paired with the same x.
    // Quantile edges belong to the upper bin; halving the first reference weight puts the edges at grid indices
    // 250, 500 and 750, so the bins are mirror images under x → 1 − x (the marginals then differ by that half
    // weight only: JS below 1e-6).
    int n = 1000;
    double[] x = new double[n];
    double[] yRef = new double[n];
    double[] yObs = new double[n];
    double[] z = new double[n];
    double[] w = new double[n];
    for (int j = 0; j < n; j++) {
      x[j] = (j + 0.5) / n;
      yRef[j] = x[j];
      yObs[j] = (n - 1 - j + 0.5) / n; // 1 − x, computed exactly as the grid value it equals
      z[j] = ((j * 7919L) % n + 0.5) / n;
      w[j] = j == 0 ? 0.5 : 1;
    }
    List<FeaturePairs.Pair> pairs = FeaturePairs.rank(List.of("x", "y", "z"), new double[][] {x, yObs, z},
        new double[][] {x, yRef, z}, w, 4);
    FeaturePairs.Pair top = pairs.get(0);
    assertEquals("x", top.first());
    assertEquals("y", top.second());
    assertEquals(Math.log(2), top.jensenShannon(), 1e-12);
    assertEquals(Math.log(2), top.beyondMarginals(), 1e-6);
    FeaturePairs.Pair xz = pairs.stream().filter(p -> p.first().equals("x") && p.second().equals("z")).findFirst()
        .orElseThrow();
    assertEquals(0, xz.jensenShannon(), 1e-6); // only the half weight differs
  }

  @Test
  void identicalSamplesGiveZeroEverywhere() {
    SplittableRandom r = new SplittableRandom(7);
    double[][] v = new double[3][500];
    double[] w = new double[500];
    for (int j = 0; j < 500; j++) {
      for (int f = 0; f < 3; f++) {
        v[f][j] = r.nextGaussian();
      }
      w[j] = 1;
    }
    for (FeaturePairs.Pair p : FeaturePairs.rank(List.of("a", "b", "c"), v, v, w, 6)) {
      assertEquals(0, p.jensenShannon(), 1e-15);
      assertEquals(0, p.beyondMarginals(), 1e-15);
    }
  }

  @Test
  void thePairNeverShowsLessThanItsFeatures() {
    // The data-processing inequality: a marginal histogram is a coarsening of the 2D one, and an f-divergence
    // (JS is one) cannot grow under coarsening (analytic), so beyondMarginals ≥ 0 on any data.
    SplittableRandom r = new SplittableRandom(11);
    for (int trial = 0; trial < 20; trial++) {
      int no = 50 + r.nextInt(200);
      int nr = 200 + r.nextInt(800);
      double[][] obs = new double[3][no];
      double[][] ref = new double[3][nr];
      double[] w = new double[nr];
      for (int i = 0; i < no; i++) {
        obs[0][i] = r.nextGaussian() + 0.3;
        obs[1][i] = 0.5 * obs[0][i] + r.nextGaussian();
        obs[2][i] = r.nextExponential();
      }
      for (int j = 0; j < nr; j++) {
        ref[0][j] = r.nextGaussian();
        ref[1][j] = r.nextGaussian();
        ref[2][j] = r.nextExponential();
        w[j] = 0.1 + r.nextDouble();
      }
      for (FeaturePairs.Pair p : FeaturePairs.rank(List.of("a", "b", "c"), obs, ref, w, 2 + r.nextInt(8))) {
        assertTrue(p.beyondMarginals() >= -1e-14, p.toString());
        assertTrue(p.jensenShannon() <= Math.log(2) + 1e-14, p.toString());
      }
    }
  }
}
