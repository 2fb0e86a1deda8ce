package triage.core.ratio;

import java.util.ArrayList;
import java.util.List;

/**
 * Fits a {@link RatioModel} to {@link TrainingData} with {@link FitSettings}.
 *
 * <p>Steps: (1) reference weights normalised to Σ w = N_exp; (2) standardisation from the
 * reference sample's weighted mean and standard deviation ({@link Standardisation#weighted});
 * (3) events stored feature-major in a padded double array (reference, then observed); (4) for
 * each random start r = 0..R−1, parameters initialised from seed_r = SplitMix64.derive(seed, r)
 * by the Glorot–Bengio uniform scheme (W_l ~ U(−a, a), a = √(6 / (n_{l−1} + n_l)), drawn in θ
 * order; biases 0; then clipped to [−C, C]) and minimised by the chosen optimiser inside the clip
 * box; (5) the start with the lowest final loss is kept (ties: lowest index). The test statistic
 * is t = −2 L_ext(f): the final loss itself for {@link LossKind#EXTENDED_LIKELIHOOD}, one extra
 * evaluation of the extended loss at f = g + log(N_obs/N_exp) for
 * {@link LossKind#BINARY_CROSS_ENTROPY}.
 *
 * <p>The result depends only on the data and the settings other than threads and kernel: see
 * {@link Objective} for the fixed-order reduction that makes it bit-identical across thread
 * counts.
 */
public final class RatioTrainer {
  private RatioTrainer() {
  }

  /** Fits without a listener. */
  public static FitResult fit(TrainingData data, FitSettings settings) {
    return fit(data, settings, TrainingListener.NONE);
  }

  /** Fits, calling {@code listener} after every iteration of every start. */
  public static FitResult fit(TrainingData data, FitSettings settings, TrainingListener listener) {
    long t0 = System.nanoTime();
    int d = data.features();
    Architecture arch = new Architecture(d, settings.hiddenWidths(), settings.activation());
    Problem problem = Problem.build(data, arch, settings.loss());
    Kernel kernel = Kernels.select(settings.kernel());
    Kernels.warmUp(kernel);
    List<RestartSummary> starts = new ArrayList<>();
    OptimiserOutcome best = null;
    int bestIndex = -1;
    long totalEvaluations = 0;
    try (Objective training = new Objective(problem.training(), kernel, settings.threads());
       Objective extended = problem.extendedForT() == null ? null
           : new Objective(problem.extendedForT(), kernel, settings.threads())) {
      for (int r = 0; r < settings.restarts(); r++) {
        long seed = SplitMix64.derive(settings.seed(), r);
        double[] theta0 = initialParameters(arch, seed, settings.clip());
        int startIndex = r;
        IterationHook hook = listener == TrainingListener.NONE ? IterationHook.NONE
            : (it, loss, pg, x) -> listener.onIteration(startIndex, it, loss, pg, x.clone());
        var recorder = new TrainingLog.Recorder(settings.logCapacity());
        OptimiserOutcome out;
        if (settings.optimiser() == OptimiserKind.ADAM) {
          out = Adam.minimise(training, theta0, settings.clip(), settings.adamLearningRate(),
              settings.adamEpochs(), settings.stoppingRule(), hook, recorder);
        } else if (settings.optimiser() == OptimiserKind.PROFILED_LBFGS) {
          out = profiledLbfgs(training, theta0, settings, hook, recorder);
        } else {
          out = ProjectedLbfgs.minimise(training, theta0, settings.clip(),
              settings.lbfgsMemory(), settings.stoppingRule(), hook, recorder);
        }
        long evaluations = out.evaluations();
        double t;
        if (extended == null) {
          t = -2.0 * out.loss();
        } else {
          t = -2.0 * extended.valueAndGradient(out.parameters(),
              new double[arch.parameterCount()]);
          evaluations++;
        }
        totalEvaluations += evaluations;
        starts.add(new RestartSummary(r, seed, out.loss(), t, out.iterations(), evaluations,
            out.reason(), out.converged(), out.projectedGradientNorm(),
            recorder.elapsedSeconds()));
        if (best == null || out.loss() < best.loss()) {
          best = out;
          bestIndex = r;
        }
      }
      RestartSummary kept = starts.get(bestIndex);
      double elapsed = (System.nanoTime() - t0) * 1e-9;
      TrainingSummary summary = new TrainingSummary(settings, data.referenceCount(),
          data.observedCount(), problem.expectedCount(), best.loss(), kept.testStatistic(),
          best.converged(), best.reason(), best.iterations(), totalEvaluations, elapsed,
          training.kernelName(), best.log(), starts);
      RatioModel model = new RatioModel(arch, best.parameters(), problem.standardisation(),
          problem.outputOffset(), data.featureNames(), summary);
      return new FitResult(model);
    }
  }

  /**
   * Projected L-BFGS on the profiled loss. The outcome carries the full parameters (u, a*(u)) of the last accepted
   * point: projected L-BFGS accepts only the point it evaluated last and reports it to the hook, so the hook keeps a
   * copy, and the outcome's loss is that evaluation's, bit for bit (a clip-tuning cap reads the same t as a fit
   * stopped there).
   */
  private static OptimiserOutcome profiledLbfgs(Objective training, double[] theta0, FitSettings settings,
      IterationHook hook, TrainingLog.Recorder recorder) {
    ProfiledObjective profiled = new ProfiledObjective(training, settings.clip(), theta0);
    double[][] accepted = new double[1][];
    IterationHook fullHook = (it, loss, pg, u) -> {
      accepted[0] = profiled.lastFull();
      hook.after(it, loss, pg, accepted[0]);
    };
    OptimiserOutcome o = ProjectedLbfgs.minimise(profiled, profiled.reduce(theta0), settings.clip(),
        settings.lbfgsMemory(), settings.stoppingRule(), fullHook, recorder);
    if (!java.util.Arrays.equals(profiled.reduce(accepted[0]), o.parameters())) {
      throw new IllegalStateException("the profiled fit's last accepted point is not the one it returned");
    }
    return new OptimiserOutcome(accepted[0], o.loss(), o.iterations(), o.evaluations(), o.reason(), o.converged(),
        o.projectedGradientNorm(), o.log());
  }

  /** Glorot–Bengio uniform initialisation, clipped (see class comment). */
  static double[] initialParameters(Architecture arch, long seed, double clip) {
    SplitMix64 rng = new SplitMix64(seed);
    double[] theta = new double[arch.parameterCount()];
    for (int l = 1; l <= arch.layerCount(); l++) {
      int nin = arch.width(l - 1);
      int nout = arch.width(l);
      double a = Math.sqrt(6.0 / (nin + nout));
      int wo = arch.weightOffset(l);
      for (int i = 0; i < nin * nout; i++) {
        theta[wo + i] = (2.0 * rng.nextDouble() - 1.0) * a;
      }
    }
    Box.project(theta, clip);
    return theta;
  }

  /**
   * Batches and constants for a fit.
   *
   * @param training        batch of the training loss
   * @param extendedForT    extended-loss batch with the BCE offset, or null for the extended loss
   * @param standardisation input standardisation
   * @param outputOffset    offset of the model output
   * @param expectedCount   N_exp
   */
  record Problem(Batch training, Batch extendedForT, Standardisation standardisation,
          double outputOffset, double expectedCount) {

    static Problem build(TrainingData data, Architecture arch, LossKind loss) {
      double nExp = data.effectiveExpectedCount();
      int nObs = data.observedCount();
      int nRef = data.referenceCount();
      double[] w = data.normalisedWeights(nExp);
      Standardisation st = Standardisation.weighted(data.referenceView(), w, data.features());
      int n = Batch.paddedSize(nRef + nObs);
      double[] x = Batch.standardisedFeatures(data, st, n);
      double[] extA = new double[n];
      double[] b = new double[n];
      System.arraycopy(w, 0, extA, 0, nRef);
      for (int j = 0; j < nObs; j++) {
        b[nRef + j] = 1.0;
      }
      if (loss == LossKind.EXTENDED_LIKELIHOOD) {
        return new Problem(new Batch(arch, loss, n, x, extA, b, 0.0), null, st, 0.0, nExp);
      }
      double[] bceA = new double[n];
      double scale = nObs / nExp;
      for (int i = 0; i < nRef; i++) {
        bceA[i] = w[i] * scale;
      }
      for (int j = 0; j < nObs; j++) {
        bceA[nRef + j] = 1.0;
      }
      double offset = Math.log(nObs / nExp);
      Batch train = new Batch(arch, loss, n, x, bceA, b, 0.0);
      return new Problem(train, train.with(LossKind.EXTENDED_LIKELIHOOD, extA, b, offset),
          st, offset, nExp);
    }
  }
}
