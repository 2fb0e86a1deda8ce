package triage.core.calibration;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import triage.core.ratio.FitSettings;
import triage.core.ratio.LossKind;
import triage.core.ratio.OptimiserKind;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.TrainingData;
import triage.core.ratio.WeightPolicy;

/** Clip tuning: t at every cap from one fit, the plateau rule, the choice, quantiles. */
class ClipTuningTest {
  /** A small 1D problem (seed 5): 600 reference events of weight 1/6 (N_exp = 100), 100 observed. */
  private static TrainingData data() {
    java.util.SplittableRandom r = new java.util.SplittableRandom(5);
    double[] ref = new double[600];
    double[] w = new double[600];
    for (int i = 0; i < ref.length; i++) {
      ref[i] = r.nextGaussian();
      w[i] = 1.0 / 6;
    }
    double[] obs = new double[100];
    for (int i = 0; i < obs.length; i++) {
      obs[i] = 0.2 + r.nextGaussian();
    }
    return new TrainingData(List.of("x"), ref, w, obs, WeightPolicy.POSITIVE_ONLY, OptionalDouble.of(100));
  }

  /**
   * Exact (the optimisers' state does not depend on the cap): t read at each cap of one long fit equals, bit for
   * bit, the t of a fit capped there; for both L-BFGS variants with one and with three random starts, and for Adam.
   */
  @ParameterizedTest
  @ValueSource(strings = {"lbfgs-1", "lbfgs-3", "profiled-1", "profiled-3", "adam-1"})
  void capsFromOneFitEqualSeparatelyCappedFits(String mode) {
    FitSettings s = FitSettings.defaults().withHiddenWidths(List.of(3)).withClip(2).withThreads(1).withSeed(9)
        .withRestarts(Integer.parseInt(mode.substring(mode.length() - 1)));
    if (mode.startsWith("adam")) {
      s = s.withOptimiser(OptimiserKind.ADAM).withAdamLearningRate(0.05);
    } else if (mode.startsWith("profiled")) {
      s = s.withOptimiser(OptimiserKind.PROFILED_LBFGS);
    }
    int[] caps = {1, 4, 20, 80, 400};
    ClipTuning.TuningToy toy = ClipTuning.fitAtCaps(data(), s, caps, 0, 100, System.nanoTime());
    for (int j = 0; j < caps.length; j++) {
      double alone = RatioTrainer.fit(data(), ClipTuning.capped(s, caps[j])).testStatistic();
      assertEquals(Double.doubleToLongBits(alone), Double.doubleToLongBits(toy.t()[j]),
          mode + " cap " + caps[j] + ": " + alone + " vs " + toy.t()[j]);
    }
  }

  /** The cross-entropy loss takes the general path (one fit per cap); same values by construction. */
  @Test
  void crossEntropyFitsEachCap() {
    FitSettings s = FitSettings.defaults().withHiddenWidths(List.of(2)).withClip(1).withThreads(1)
        .withLoss(LossKind.BINARY_CROSS_ENTROPY);
    int[] caps = {5, 50};
    ClipTuning.TuningToy toy = ClipTuning.fitAtCaps(data(), s, caps, 0, 100, System.nanoTime());
    assertEquals(RatioTrainer.fit(data(), ClipTuning.capped(s, 5)).testStatistic(), toy.t()[0], 0.0);
  }

  private static ClipTuning.TuningToy toy(double clip, double... t) {
    return new ClipTuning.TuningToy(0, 0, 10, clip, new int[] {10, 100, 1000}, t, 50, true, 0);
  }

  /**
   * The rule on hand-made toys (hand computation): clip 1 keeps growing (median 2 → 3, +50%) and overfits; clip
   * 0.5 grows by 1% and plateaus; the choice is the plateaued clip, and none when nothing plateaus.
   */
  @Test
  void plateauRuleAndChoice() {
    int[] caps = {10, 100, 1000};
    List<ClipTuning.TuningToy> grows = new ArrayList<>();
    List<ClipTuning.TuningToy> flat = new ArrayList<>();
    for (int i = 0; i < 5; i++) {
      grows.add(toy(1, 1, 2 + i, 3 + i));
      flat.add(toy(0.5, 1, 4 + i, 4.04 + i));
    }
    // Medians of {3..7} and {4.04..8.04}: 5 and 6.04; prior caps: 4 and 6 (definition-7 quantiles).
    ClipTuning.Curve g = ClipTuning.curve(1, caps, grows, 7, 0.05);
    ClipTuning.Curve f = ClipTuning.curve(0.5, caps, flat, 7, 0.05);
    assertEquals(5, g.median()[2], 1e-12);
    assertEquals((5.0 - 4.0) / 4.0, g.growth(), 1e-12);
    assertFalse(g.plateau());
    assertEquals(0.04 / 6, f.growth(), 1e-12);
    assertTrue(f.plateau());
    assertEquals(0.5, ClipTuning.choose(List.of(f, g), 7, 0.05).clip());
    assertNull(ClipTuning.choose(List.of(g), 7, 0.05).clip());
    // Among two plateaued clips the one nearer χ²(k) wins: toys at the χ²(7) deciles 0.1, 0.3, …, 0.9 (KS distance
    // 0.1 by construction) beat toys between 0.5 and 0.9 (all below the χ²(7) 1% point, distance above 0.8).
    List<ClipTuning.TuningToy> nearChi2 = new ArrayList<>();
    List<ClipTuning.TuningToy> far = new ArrayList<>();
    org.apache.commons.statistics.distribution.ChiSquaredDistribution chi2 =
        org.apache.commons.statistics.distribution.ChiSquaredDistribution.of(7);
    double[] chi2Quantiles = new double[5];
    for (int i = 0; i < 5; i++) {
      chi2Quantiles[i] = chi2.inverseCumulativeProbability(0.1 + 0.2 * i);
    }
    for (int i = 0; i < 5; i++) {
      nearChi2.add(toy(2, 1, chi2Quantiles[i], chi2Quantiles[i]));
      far.add(toy(4, 1, 0.5 + 0.1 * i, 0.5 + 0.1 * i));
    }
    ClipTuning.Curve near = ClipTuning.curve(2, caps, nearChi2, 7, 0.05);
    ClipTuning.Curve away = ClipTuning.curve(4, caps, far, 7, 0.05);
    assertEquals(0.1, near.ksDistance(), 1e-9);
    assertTrue(away.ksDistance() > 0.8, "KS distance " + away.ksDistance());
    assertEquals(2.0, ClipTuning.choose(List.of(away, near), 7, 0.05).clip());
  }

  @Test
  void capsAreChecked() {
    assertThrows(IllegalArgumentException.class, () -> ClipTuning.checkCaps(new int[] {100}));
    assertThrows(IllegalArgumentException.class, () -> ClipTuning.checkCaps(new int[] {100, 100}));
    assertThrows(IllegalArgumentException.class, () -> ClipTuning.checkCaps(new int[] {0, 100}));
  }

  /** Definition-7 quantiles by hand: h = (n − 1) q, linear between order statistics. */
  @Test
  void quantiles() {
    double[] v = {4, 1, 3, 2, 5};
    assertEquals(3, Quantiles.of(v, 0.5), 0.0);
    assertEquals(2, Quantiles.of(v, 0.25), 0.0);
    // {1, 2, 3, 4}: h = 3 · 0.975 = 2.925 → 3 + 0.925 · (4 − 3)
    assertEquals(3.925, Quantiles.of(new double[] {1, 2, 3, 4}, 0.975), 1e-15);
    assertEquals(7, Quantiles.of(new double[] {7}, 0.975), 0.0);
    assertEquals(5, Quantiles.of(v, 1), 0.0);
    assertThrows(IllegalArgumentException.class, () -> Quantiles.of(new double[0], 0.5));
    assertThrows(IllegalArgumentException.class, () -> Quantiles.of(v, 1.5));
  }
}
