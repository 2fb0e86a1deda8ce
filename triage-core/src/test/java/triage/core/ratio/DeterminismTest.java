package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * (e) Same seed and settings give the same t (required: 1e−9 relative; asserted: bit-identical,
 * which the fixed chunk-order reduction guarantees) across two runs, across thread counts 1, 2
 * and 3, and across the plain-Java and vector kernels.
 */
class DeterminismTest {
  /** 12,000 + 1,200 events: four reduction chunks, so the chunk order matters. */
  private static final TrainingData DATA =
      SyntheticData.gaussianBump(new double[] {1.0, 0.5}, 0.3, 12_000, 1_200, 50, 21L);

  private static FitSettings settings(int threads) {
    return FitSettings.defaults().withThreads(threads).withSeed(42L).withRestarts(2)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(120));
  }

  @ParameterizedTest
  @EnumSource(value = OptimiserKind.class, names = {"PROJECTED_LBFGS", "PROFILED_LBFGS"})
  void identicalAcrossRunsThreadCountsAndKernels(OptimiserKind optimiser) {
    FitResult reference = RatioTrainer.fit(DATA, settings(1).withOptimiser(optimiser));
    for (int threads : new int[] {1, 2, 3}) {
      for (KernelChoice kernel : new KernelChoice[] {KernelChoice.AUTO, KernelChoice.SCALAR}) {
        FitResult r = RatioTrainer.fit(DATA, settings(threads).withKernel(kernel).withOptimiser(optimiser));
        String what = "threads=" + threads + " kernel=" + kernel;
        assertEquals(Double.doubleToRawLongBits(reference.testStatistic()),
            Double.doubleToRawLongBits(r.testStatistic()), what);
        assertArrayEquals(reference.model().parameters(), r.model().parameters(), 0.0, what);
        assertArrayEquals(reference.restartLosses(), r.restartLosses(), 0.0, what);
        assertEquals(reference.iterations(), r.iterations(), what);
      }
    }
  }

  @Test
  void adamIsDeterministicAcrossThreadCounts() {
    FitSettings adam = settings(1).withOptimiser(OptimiserKind.ADAM).withAdamEpochs(100)
        .withRestarts(1);
    FitResult one = RatioTrainer.fit(DATA, adam);
    FitResult three = RatioTrainer.fit(DATA, adam.withThreads(3));
    assertEquals(Double.doubleToRawLongBits(one.testStatistic()),
        Double.doubleToRawLongBits(three.testStatistic()));
  }

  @Test
  void startSeedsAreDerivedFromTheRunSeed() {
    FitResult r = RatioTrainer.fit(DATA, settings(2));
    assertEquals(SplitMix64.derive(42L, 0), r.starts().get(0).seed());
    assertEquals(SplitMix64.derive(42L, 1), r.starts().get(1).seed());
    // the kept start is the one with the lowest loss
    double min = Math.min(r.restartLosses()[0], r.restartLosses()[1]);
    assertEquals(min, r.finalLoss(), 0.0);
  }
}
