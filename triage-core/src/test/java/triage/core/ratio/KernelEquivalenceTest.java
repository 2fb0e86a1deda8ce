package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * The vector kernel against the plain-Java kernel (bit-identical by construction), the
 * exponential against {@link StrictMath#exp} (the JDK's fdlibm port, external to this package),
 * and the training-time log ratio against {@link RatioModel#scoreAll}.
 */
class KernelEquivalenceTest {

  @Test
  void vectorModuleIsPresentInTheTestJvm() {
    // surefire runs with --add-modules=jdk.incubator.vector (see pom.xml)
    assertTrue(Kernels.vectorAvailable(), "vector kernel should load in the test JVM");
  }

  @Test
  void fastExpIsWithinTwoUlpOfStrictMath() {
    // tolerance: 2 ulp of the StrictMath value (fdlibm is itself < 1 ulp from exact)
    SplitMix64 rng = new SplitMix64(3L);
    double worst = 0;
    for (int i = 0; i < 2_000_000; i++) {
      double x = (rng.nextDouble() * 2 - 1) * (i % 2 == 0 ? 700 : 5);
      double ref = StrictMath.exp(x);
      double ulps = Math.abs(FastExp.exp(x) - ref) / Math.ulp(ref);
      worst = Math.max(worst, ulps);
    }
    assertTrue(worst <= 2.0, "worst error " + worst + " ulp");
    assertEquals(1.0, FastExp.exp(0.0), 0.0); // exact: e^0 = 1
    assertEquals(Math.exp(700), FastExp.exp(1e6), Math.ulp(Math.exp(700)) * 2); // clamp
  }

  @ParameterizedTest
  @CsvSource({
    "EXTENDED_LIKELIHOOD, SIGMOID, '5,5'",
    "EXTENDED_LIKELIHOOD, TANH, '7,3,2'",
    "EXTENDED_LIKELIHOOD, SIGMOID, '4,8'",
    "BINARY_CROSS_ENTROPY, SIGMOID, '6'",
    "EXTENDED_LIKELIHOOD, SIGMOID, ''",
  })
  void vectorAndScalarKernelsAreBitIdentical(LossKind loss, Activation activation, String widths) {
    List<Integer> w = widths.isEmpty() ? List.of()
        : java.util.Arrays.stream(widths.split(",")).map(Integer::valueOf).toList();
    TrainingData data = SyntheticData.gaussianBump(new double[] {1, 0, -1}, 0.3, 9000, 900, 60, 4L);
    Architecture arch = new Architecture(3, w, activation);
    RatioTrainer.Problem problem = RatioTrainer.Problem.build(data, arch, loss);
    double[] theta = RatioTrainer.initialParameters(arch, 77L, 9.0);
    for (int i = 0; i < theta.length; i++) {
      theta[i] *= 2.5; // leave the small-weight regime
    }
    double[] gs = new double[theta.length];
    double[] gv = new double[theta.length];
    double ls;
    double lv;
    try (Objective s = new Objective(problem.training(), Kernels.select(KernelChoice.SCALAR), 1);
       Objective v = new Objective(problem.training(), Kernels.select(KernelChoice.VECTOR), 2)) {
      ls = s.valueAndGradient(theta, gs);
      lv = v.valueAndGradient(theta, gv);
    }
    assertEquals(Double.doubleToRawLongBits(ls), Double.doubleToRawLongBits(lv));
    assertArrayEquals(gs, gv, 0.0);
  }

  @Test
  void trainingLogRatioEqualsModelScores() {
    // the extended loss recomputed from RatioModel.scoreAll (plain sum, different order)
    // agrees with the engine's fixed-order chunk sum to 1e−12 relative
    TrainingData data = SyntheticData.gaussianShift(new double[] {0.4, 0.2}, 6000, 600, 8L);
    Architecture arch = new Architecture(2, List.of(5, 5), Activation.SIGMOID);
    RatioTrainer.Problem problem = RatioTrainer.Problem.build(data, arch, LossKind.EXTENDED_LIKELIHOOD);
    double[] theta = RatioTrainer.initialParameters(arch, 5L, 9.0);
    double loss;
    try (Objective o = new Objective(problem.training(), Kernels.select(KernelChoice.AUTO), 2)) {
      loss = o.valueAndGradient(theta, new double[theta.length]);
    }
    var model = new RatioModel(arch, theta, problem.standardisation(), 0.0, data.featureNames(), null);
    double[] fr = model.scoreAll(data.reference(), data.referenceCount(), 2);
    double[] fo = model.scoreAll(data.observed(), data.observedCount(), 2);
    double[] w = data.normalisedWeights(data.observedCount());
    double direct = 0;
    for (int i = 0; i < fr.length; i++) {
      direct += w[i] * (Math.exp(fr[i]) - 1);
    }
    for (double f : fo) {
      direct -= f;
    }
    assertEquals(direct, loss, 1e-12 * Math.max(1, Math.abs(direct)));
  }
}
