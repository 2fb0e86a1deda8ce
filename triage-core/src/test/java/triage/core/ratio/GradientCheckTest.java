package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * (a) Analytic gradients of both losses with respect to every parameter against central finite
 * differences (an external check: the derivative definition, not the back-propagation code).
 *
 * <p>Step h = 1e−5 per parameter; central-difference error is O(h²) truncation plus
 * O(ε|L|/h) ≈ 1e−8 rounding for |L| ≈ 10³, so the tolerance is
 * |g_fd − g| ≤ 1e−6 · max(1, |g|).
 */
class GradientCheckTest {

  @ParameterizedTest
  @CsvSource({
    "EXTENDED_LIKELIHOOD, SIGMOID, SCALAR",
    "EXTENDED_LIKELIHOOD, TANH, SCALAR",
    "BINARY_CROSS_ENTROPY, SIGMOID, SCALAR",
    "BINARY_CROSS_ENTROPY, TANH, SCALAR",
    "EXTENDED_LIKELIHOOD, SIGMOID, VECTOR",
    "BINARY_CROSS_ENTROPY, TANH, VECTOR",
  })
  void lossGradientMatchesCentralDifferences(LossKind loss, Activation activation,
                        KernelChoice kernel) {
    TrainingData data = SyntheticData.gaussianShift(new double[] {0.5, -0.3}, 5000, 700, 11L);
    Architecture arch = new Architecture(2, List.of(4, 3), activation);
    RatioTrainer.Problem problem = RatioTrainer.Problem.build(data, arch, loss);
    SplitMix64 rng = new SplitMix64(5L);
    double[] theta = new double[arch.parameterCount()];
    for (int i = 0; i < theta.length; i++) {
      theta[i] = 3.0 * rng.nextDouble() - 1.5;
    }
    try (Objective obj = new Objective(problem.training(), Kernels.select(kernel), 2)) {
      double[] g = new double[theta.length];
      double l0 = obj.valueAndGradient(theta, g);
      assertTrue(Double.isFinite(l0));
      double[] scratch = new double[theta.length];
      for (int i = 0; i < theta.length; i++) {
        double h = 1e-5;
        double[] tp = theta.clone();
        double[] tm = theta.clone();
        tp[i] += h;
        tm[i] -= h;
        double fd = (obj.valueAndGradient(tp, scratch) - obj.valueAndGradient(tm, scratch))
            / (2 * h);
        assertEquals(fd, g[i], 1e-6 * Math.max(1.0, Math.abs(g[i])),
            "parameter " + i + " (" + loss + ", " + activation + ")");
      }
    }
  }

  @ParameterizedTest
  @CsvSource({"SIGMOID", "TANH"})
  void inputGradientMatchesCentralDifferences(Activation activation) {
    // ∂f/∂x_k in original units against central differences of score(x); h = 1e−6 on inputs
    // of order 1, tolerance 1e−7 absolute (|f| ≲ 10, rounding ≈ 1e−16·10/1e−6 = 1e−9).
    Architecture arch = new Architecture(3, List.of(5, 4), activation);
    SplitMix64 rng = new SplitMix64(9L);
    double[] theta = new double[arch.parameterCount()];
    for (int i = 0; i < theta.length; i++) {
      theta[i] = 2.0 * rng.nextDouble() - 1.0;
    }
    var st = new Standardisation(new double[] {1.0, -2.0, 0.5}, new double[] {2.0, 0.5, 3.0});
    var model = new RatioModel(arch, theta, st, 0.25, SyntheticData.names(3), null);
    for (int trial = 0; trial < 20; trial++) {
      double[] x = {3 * rng.nextGaussian(), 3 * rng.nextGaussian(), 3 * rng.nextGaussian()};
      double[] g = model.gradient(x);
      for (int k = 0; k < 3; k++) {
        double h = 1e-6;
        double[] xp = x.clone();
        double[] xm = x.clone();
        xp[k] += h;
        xm[k] -= h;
        double fd = (model.score(xp) - model.score(xm)) / (2 * h);
        assertEquals(fd, g[k], 1e-7, "feature " + k);
      }
    }
    // bulk form equals the single-event form bit for bit
    int n = 1000;
    double[] fm = new double[3 * n];
    for (int i = 0; i < fm.length; i++) {
      fm[i] = 2 * rng.nextGaussian();
    }
    double[] bulk = model.gradientAll(fm, n, 3);
    for (int i = 0; i < n; i++) {
      double[] g = model.gradient(new double[] {fm[i], fm[n + i], fm[2 * n + i]});
      for (int k = 0; k < 3; k++) {
        assertEquals(Double.doubleToRawLongBits(g[k]), Double.doubleToRawLongBits(bulk[k * n + i]));
      }
    }
  }
}
