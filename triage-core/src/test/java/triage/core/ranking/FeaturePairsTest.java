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

  @Test
  void negativeWeightsAreSignedWeightsAsInTheOneFeatureMeasures() {
    // An event of weight 2 at the largest value of every feature, and the same point as two events of weights 3
    // and −1: every quantile edge and every cell sum is the same (the split point is the last in sort order, so
    // the cumulative weight crosses each quantile level at the same value), so the pairs must be the same
    // (up to the order of additions in a cell). Before, a negative weight threw ("this is a bug" in rank).
    SplittableRandom r = new SplittableRandom(5);
    int nr = 400;
    double[][] ref = new double[3][nr];
    double[][] split = new double[3][nr + 1];
    double[] w = new double[nr];
    double[] ws = new double[nr + 1];
    for (int j = 0; j < nr; j++) {
      for (int f = 0; f < 3; f++) {
        ref[f][j] = j == nr - 1 ? 10 : r.nextGaussian();
        split[f][j] = ref[f][j];
      }
      w[j] = j == nr - 1 ? 2 : 1;
      ws[j] = j == nr - 1 ? 3 : 1;
    }
    for (int f = 0; f < 3; f++) {
      split[f][nr] = 10;
    }
    ws[nr] = -1;
    double[][] obs = new double[3][150];
    for (int i = 0; i < 150; i++) {
      obs[0][i] = r.nextGaussian() + 0.5;
      obs[1][i] = obs[0][i] + 0.3 * r.nextGaussian();
      obs[2][i] = r.nextGaussian();
    }
    List<String> names = List.of("a", "b", "c");
    List<FeaturePairs.Pair> plain = FeaturePairs.rank(names, obs, ref, w, 4);
    List<FeaturePairs.Pair> signed = FeaturePairs.rank(names, obs, split, ws, 4);
    assertEquals(0, FeaturePairs.unmeasured(signed));
    for (int p = 0; p < plain.size(); p++) {
      assertEquals(plain.get(p).first(), signed.get(p).first());
      assertEquals(plain.get(p).second(), signed.get(p).second());
      assertEquals(plain.get(p).jensenShannon(), signed.get(p).jensenShannon(), 1e-15);
      assertEquals(plain.get(p).beyondMarginals(), signed.get(p).beyondMarginals(), 1e-15);
    }
  }

  @Test
  void aPairWithANegativeCellHasNoDivergenceAndComesLast() {
    // Reference on the diagonal y = x (weight 1) plus one event of weight −0.5 in the corner (largest x,
    // smallest y) where no other reference event lies: that cell of the (x, y) grid sums to −0.5, and a
    // divergence of a histogram with negative content is undefined, so the pair gets NaN; z is independent of
    // both, so its pairs have no empty cell and are measured.
    SplittableRandom r = new SplittableRandom(9);
    int nr = 800;
    double[][] ref = new double[3][nr + 1];
    double[] w = new double[nr + 1];
    for (int j = 0; j < nr; j++) {
      ref[0][j] = (j + 0.5) / nr;
      ref[1][j] = ref[0][j];
      ref[2][j] = r.nextDouble();
      w[j] = 1;
    }
    ref[0][nr] = 0.9999;
    ref[1][nr] = 0.0001;
    ref[2][nr] = 0.5;
    w[nr] = -0.5;
    double[][] obs = new double[3][100];
    for (int i = 0; i < 100; i++) {
      obs[0][i] = r.nextDouble();
      obs[1][i] = obs[0][i];
      obs[2][i] = r.nextDouble();
    }
    List<FeaturePairs.Pair> pairs = FeaturePairs.rank(List.of("x", "y", "z"), obs, ref, w, 4);
    assertEquals(1, FeaturePairs.unmeasured(pairs));
    FeaturePairs.Pair last = pairs.get(2);
    assertEquals("x", last.first());
    assertEquals("y", last.second());
    assertTrue(Double.isNaN(last.jensenShannon()) && Double.isNaN(last.beyondMarginals()), last.toString());
    for (FeaturePairs.Pair p : pairs.subList(0, 2)) {
      assertTrue(p.jensenShannon() >= 0 && p.jensenShannon() <= Math.log(2), p.toString());
    }
  }
}
