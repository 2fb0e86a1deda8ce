package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** PRIM finds a planted box and keeps only the cuts that matter. */
class PrimTest {
  /**
   * Reference uniform on [0, 1]³ (weights 0.1, 20,000 events: expected 2,000); observed 2,000 uniform events plus
   * 150 in the box x0 ∈ [0.6, 0.7] (seed 3). The planted excess lives in x0 alone, so PRIM must cut on x0 around
   * [0.6, 0.7] and prune the cuts on x1 and x2. Tolerances: one bin of α-peeling (~0.03) on the bounds.
   */
  @Test
  void findsAPlantedWindowAndPrunesIrrelevantCuts() {
    SplittableRandom r = new SplittableRandom(3);
    int nRef = 20_000;
    double[][] ref = new double[3][nRef];
    double[] w = new double[nRef];
    for (int j = 0; j < nRef; j++) {
      for (int k = 0; k < 3; k++) {
        ref[k][j] = r.nextDouble();
      }
      w[j] = 0.1;
    }
    int nObs = 2150;
    double[][] obs = new double[3][nObs];
    for (int i = 0; i < nObs; i++) {
      for (int k = 0; k < 3; k++) {
        obs[k][i] = r.nextDouble();
      }
      if (i >= 2000) {
        obs[0][i] = 0.6 + 0.1 * r.nextDouble();
      }
    }
    Prim.Result res = Prim.find(obs, ref, w, Prim.Settings.defaults());
    assertEquals(1, res.cuts().size(), res.toString());
    Prim.Cut c = res.cuts().get(0);
    assertEquals(0, c.feature());
    assertEquals(0.6, c.lo(), 0.03, res.toString());
    assertEquals(0.7, c.hi(), 0.03, res.toString());
    assertTrue(res.z() > 5, res.toString());
    // Without its only cut the box is everything: all observed events.
    assertEquals(nObs, c.observedWithout());
  }

  /**
   * The same planted box, with x1 taking only the values 0..3 (ties in every peel along it), and 15 observed
   * events at x2 = 2 where the reference has none. Tied peels that remove no observed event must not stop the
   * peeling, and a box with no reference yield (no defined significance; it scored +∞ before) must not win.
   * Before, the peeling stopped after 8 peels, when a peel on x1 that removed nothing scored best, and reported
   * x0 in [0.10, 0.72] with Z = 5.6; the peeling now reaches Z = 8.2 near [0.59, 0.68].
   */
  @Test
  void boxesWithoutReferenceAreNotChosenAndTiesDoNotStopThePeeling() {
    SplittableRandom r = new SplittableRandom(4);
    int nRef = 20_000;
    double[][] ref = new double[3][nRef];
    double[] w = new double[nRef];
    for (int j = 0; j < nRef; j++) {
      ref[0][j] = r.nextDouble();
      ref[1][j] = r.nextInt(4);
      ref[2][j] = r.nextDouble();
      w[j] = 0.1;
    }
    int nObs = 2165;
    double[][] obs = new double[3][nObs];
    for (int i = 0; i < nObs; i++) {
      obs[0][i] = i >= 2000 && i < 2150 ? 0.6 + 0.1 * r.nextDouble() : r.nextDouble();
      obs[1][i] = r.nextInt(4);
      obs[2][i] = i >= 2150 ? 2.0 : r.nextDouble();
    }
    Prim.Result res = Prim.find(obs, ref, w, Prim.Settings.defaults());
    assertTrue(res.expected() > 0 && Double.isFinite(res.z()), res.toString());
    assertTrue(res.z() > 5, res.toString());
    Prim.Cut c = res.cuts().stream().filter(x -> x.feature() == 0).findFirst().orElseThrow();
    assertEquals(0.6, c.lo(), 0.03, res.toString());
    assertEquals(0.7, c.hi(), 0.03, res.toString());
  }
}
