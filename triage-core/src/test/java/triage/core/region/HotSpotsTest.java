package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import triage.core.inference.CountingSignificance;

class HotSpotsTest {
  @Test
  void everySquareIsTriedOnceAndCountedLikeADirectSum() {
    int nx = 7;
    int ny = 5;
    long[][] n = new long[nx][ny];
    double[][] b = new double[nx][ny];
    double[][] b2 = new double[nx][ny];
    SplittableRandom r = new SplittableRandom(4);
    for (int i = 0; i < nx; i++) {
      for (int j = 0; j < ny; j++) {
        n[i][j] = r.nextInt(20);
        b[i][j] = 5 + r.nextDouble() * 5;
        b2[i][j] = 0.1 * b[i][j];
      }
    }
    HotSpots.Result res = HotSpots.scan(n, b, b2, 3, 4);
    // Analytic: (nx − k + 1)(ny − k + 1) squares of side k.
    assertEquals(7 * 5 + 6 * 4 + 5 * 3, res.trials());
    HotSpots.Spot s = res.spots().get(0);
    long count = 0;
    double exp = 0;
    double var = 0;
    for (int i = s.x(); i < s.x() + s.size(); i++) {
      for (int j = s.y(); j < s.y() + s.size(); j++) {
        count += n[i][j];
        exp += b[i][j];
        var += b2[i][j];
      }
    }
    assertEquals(count, s.observed());
    assertEquals(exp, s.expected(), 1e-9);
    assertEquals(CountingSignificance.zBiFromBackground(count, exp, Math.sqrt(var)).z(), s.localZ(), 1e-9);
    assertEquals(Math.min(1, res.trials() * s.localP()), s.globalP(), 1e-15);
  }

  @Test
  void anInjectedSpotIsFoundAndCellsWithoutReferenceAreCounted() {
    long[][] n = new long[16][16];
    double[][] b = new double[16][16];
    double[][] b2 = new double[16][16];
    SplittableRandom r = new SplittableRandom(8);
    for (int i = 0; i < 16; i++) {
      for (int j = 0; j < 16; j++) {
        b[i][j] = 20;
        b2[i][j] = 0.2;
        n[i][j] = poisson(r, 20);
      }
    }
    n[11][3] += 40;
    b[0][0] = 0;
    b2[0][0] = 0;
    HotSpots.Result res = HotSpots.scan(n, b, b2, 2, 3);
    HotSpots.Spot s = res.spots().get(0);
    assertTrue(s.x() <= 11 && 11 < s.x() + s.size() && s.y() <= 3 && 3 < s.y() + s.size(), s.toString());
    assertTrue(s.globalZ() > 3, "40 extra on 20 expected: " + s.globalZ());
    assertEquals(n[0][0], res.observedWithoutReference());
  }

  /** Rounding leftovers of the prefix sums never make a square without reference events look tried. */
  @Test
  void squaresWithoutReferenceAreNeverTried() {
    long[][] n = new long[6][6];
    double[][] b = new double[6][6];
    double[][] b2 = new double[6][6];
    for (int i = 0; i < 6; i++) {
      for (int j = 0; j < 6; j++) {
        // Weights whose sums do not cancel exactly; the right half of the map has no reference at all.
        b[i][j] = j < 3 ? 0.1 + 1e7 * (i == 0 && j == 0 ? 1 : 0) : 0;
        b2[i][j] = j < 3 ? b[i][j] * b[i][j] : 0;
        n[i][j] = j < 3 ? 0 : 3;
      }
    }
    HotSpots.Result res = HotSpots.scan(n, b, b2, 3, 5);
    for (HotSpots.Spot s : res.spots()) {
      assertTrue(s.y() < 3, "a square with reference cells: " + s);
    }
    assertEquals(3 * 18, res.observedWithoutReference());
  }

  /**
   * Without a signal the trials-corrected p-value is conservative: over 300 null maps (12 × 12 cells, squares up
   * to 3, seeds fixed) the rate of global p ≤ 0.05 must not exceed 0.05 by more than 2.5 binomial standard
   * deviations.
   */
  @Test
  void theTrialsCorrectionIsConservativeWithoutASignal() {
    int maps = 300;
    int hits = 0;
    for (int d = 0; d < maps; d++) {
      SplittableRandom r = new SplittableRandom(500 + d);
      long[][] n = new long[12][12];
      double[][] b = new double[12][12];
      double[][] b2 = new double[12][12];
      for (int i = 0; i < 12; i++) {
        for (int j = 0; j < 12; j++) {
          b[i][j] = 8;
          b2[i][j] = 0.08;
          n[i][j] = poisson(r, 8);
        }
      }
      hits += HotSpots.scan(n, b, b2, 3, 1).spots().get(0).globalP() <= 0.05 ? 1 : 0;
    }
    assertTrue(hits / (double) maps <= 0.05 + 2.5 * Math.sqrt(0.05 * 0.95 / maps), "rate " + hits);
  }

  private static long poisson(SplittableRandom r, double mean) {
    // The product-of-uniforms method, summed in log space.
    double sum = 0;
    long k = 0;
    while (true) {
      sum += Math.log(r.nextDouble());
      if (sum < -mean) {
        return k;
      }
      k++;
    }
  }
}
