package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * (b) and (c): reference N(0, I) (20,000 importance-weighted events drawn from N(0, 1.25² I)) and
 * observed N(μ, I) (2,000 events), μ = (0.5, 0), in 2D. The analytic log ratio is
 * f_true(x) = log(N_obs/N_exp) + log[N(x; μ, I) / N(x; 0, I)] = μ·x − |μ|²/2 (N_exp = N_obs);
 * the Neyman–Pearson value is t_NP = −2 L_ext(f_true) on the same samples (≈ 2 N_obs KL = |μ|²
 * N_obs = 500 in expectation).
 *
 * <p>Tolerances (statistical: 2,000 observed events, 51 parameters): RMS(f − f_true) ≤ 0.15 over
 * the reference events with |x| ≤ 2 (the bulk, ≈ 86% of the weight); |t − t_NP| ≤ 0.15 t_NP (a
 * flexible fit exceeds t_NP by roughly the number of effectively free parameters); the two loss
 * routes agree to RMS ≤ 0.15 in the bulk (each carries its own statistical error of ≈ 0.05–0.1).
 */
class GaussianShiftTest {
  /** Shift of the observed sample. */
  private static final double[] MU = {0.5, 0.0};
  /** The samples. */
  private static TrainingData data;
  /** Extended-likelihood fit. */
  private static FitResult extended;
  /** Cross-entropy fit. */
  private static FitResult crossEntropy;
  /** Extended-likelihood fit by the other L-BFGS variant (output layer profiled out, or not). */
  private static FitResult other;

  @BeforeAll
  static void fit() {
    data = SyntheticData.gaussianShift(MU, 20_000, 2_000, 2024L);
    FitSettings s = FitSettings.defaults().withThreads(2)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(1500));
    extended = RatioTrainer.fit(data, s);
    crossEntropy = RatioTrainer.fit(data, s.withLoss(LossKind.BINARY_CROSS_ENTROPY));
    other = RatioTrainer.fit(data, s.withOptimiser(s.optimiser() == OptimiserKind.PROFILED_LBFGS
        ? OptimiserKind.PROJECTED_LBFGS : OptimiserKind.PROFILED_LBFGS));
  }

  private static double trueLogRatio(double x0, double x1) {
    return MU[0] * x0 + MU[1] * x1 - 0.5 * (MU[0] * MU[0] + MU[1] * MU[1]);
  }

  /** RMS over bulk reference events of (a − b). */
  private static double bulkRms(double[] a, double[] b) {
    double[] ref = data.reference();
    int n = data.referenceCount();
    double s = 0;
    int count = 0;
    for (int i = 0; i < n; i++) {
      double x0 = ref[i];
      double x1 = ref[n + i];
      if (x0 * x0 + x1 * x1 <= 4.0) {
        s += (a[i] - b[i]) * (a[i] - b[i]);
        count++;
      }
    }
    return Math.sqrt(s / count);
  }

  private static double[] truth() {
    double[] ref = data.reference();
    int n = data.referenceCount();
    double[] t = new double[n];
    for (int i = 0; i < n; i++) {
      t[i] = trueLogRatio(ref[i], ref[n + i]);
    }
    return t;
  }

  private static double neymanPearsonT() {
    double[] w = data.normalisedWeights(data.observedCount());
    double[] ref = data.reference();
    double[] obs = data.observed();
    int n = data.referenceCount();
    int m = data.observedCount();
    double loss = 0;
    for (int i = 0; i < n; i++) {
      loss += w[i] * (Math.exp(trueLogRatio(ref[i], ref[n + i])) - 1.0);
    }
    for (int j = 0; j < m; j++) {
      loss -= trueLogRatio(obs[j], obs[m + j]);
    }
    return -2.0 * loss;
  }

  @Test
  void extendedLossApproachesTheAnalyticLogRatioAndNeymanPearsonT() {
    double[] f = extended.model().scoreAll(data.reference(), data.referenceCount(), 2);
    double rms = bulkRms(f, truth());
    double tNp = neymanPearsonT();
    System.out.printf("extended: RMS %.4f, t %.3f, t_NP %.3f, iterations %d, %s%n", rms,
        extended.testStatistic(), tNp, extended.iterations(), extended.stopReason());
    assertTrue(rms <= 0.15, "bulk RMS " + rms);
    assertEquals(tNp, extended.testStatistic(), 0.15 * tNp);
    // t is −2 × the final loss for the extended likelihood (definition)
    assertEquals(-2 * extended.finalLoss(), extended.testStatistic(), 0.0);
  }

  @Test
  void bothLbfgsVariantsApproachTheAnalyticLogRatio() {
    double[] f = other.model().scoreAll(data.reference(), data.referenceCount(), 2);
    double[] fe = extended.model().scoreAll(data.reference(), data.referenceCount(), 2);
    double rms = bulkRms(f, truth());
    double tNp = neymanPearsonT();
    System.out.printf("%s: RMS %.4f, t %.3f (the other %.3f), t_NP %.3f, evaluations %d against %d%n",
        other.summary().settings().optimiser(), rms, other.testStatistic(), extended.testStatistic(), tNp,
        other.summary().lossEvaluations(), extended.summary().lossEvaluations());
    assertTrue(rms <= 0.15, "bulk RMS " + rms);
    assertTrue(bulkRms(f, fe) <= 0.15, "RMS between the two fits " + bulkRms(f, fe));
    assertEquals(tNp, other.testStatistic(), 0.15 * tNp);
  }

  @Test
  void crossEntropyRouteGivesTheSameLogRatio() {
    double[] fe = extended.model().scoreAll(data.reference(), data.referenceCount(), 2);
    double[] fb = crossEntropy.model().scoreAll(data.reference(), data.referenceCount(), 2);
    double between = bulkRms(fe, fb);
    double toTruth = bulkRms(fb, truth());
    double tNp = neymanPearsonT();
    System.out.printf("cross entropy: RMS to truth %.4f, to extended %.4f, t %.3f%n", toTruth,
        between, crossEntropy.testStatistic());
    assertTrue(between <= 0.15, "RMS between routes " + between);
    assertTrue(toTruth <= 0.15, "bulk RMS " + toTruth);
    assertEquals(tNp, crossEntropy.testStatistic(), 0.15 * tNp);
    assertEquals(0.0, crossEntropy.model().outputOffset(), 0.0); // log(N_obs/N_exp) = log 1
  }
}
