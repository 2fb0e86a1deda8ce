package triage.core.ratio;

import java.io.PrintWriter;
import java.util.List;
import java.util.Locale;

/**
 * Speed figures of the training engine (a program, not a test: nothing is asserted).
 *
 * <p>Cases: 1D (reference Exp(1), observed with a narrow Gaussian bump), 2D and 5D (reference
 * N(0, I), observed with a narrow Gaussian bump), each with {@code nRef} weighted reference and
 * {@code nObs} observed events, network d-5-5-1 sigmoid, clip 9, extended likelihood. For each:
 * steady-state seconds per loss-and-gradient evaluation (vector and plain-Java kernels), a
 * projected L-BFGS fit to the default stopping rule (seconds, iterations, evaluations, t), and
 * Adam for a fixed epoch count (seconds per epoch, t).
 *
 * <p>Arithmetic limit per evaluation: the per-element cost of a double exponential, a double
 * division and a double fused multiply-add (with its two loads) is measured by tight vector
 * loops on one L1-resident tile ({@link VectorProbe}); the engine's operation counts per event
 * (exponentials = hidden units + 1, divisions = hidden units, other ops = 2·Σ n_l n_{l−1}
 * (forward and weight gradients) + Σ_l n_l (bias gradients) + Σ_{l≥2 hidden} n_l n_{l−1}
 * (back-propagation) + 4 per hidden unit + 8 for the loss) times the event count, divided by
 * the thread count, give the limit; the report prints achieved / limit.
 *
 * <p>Run: {@code java --add-modules jdk.incubator.vector -cp target/classes:<jackson jars>
 * triage.core.ratio.FitBenchmark [threads] [nRef] [nObs] [adamEpochs]}.
 */
public final class FitBenchmark {
  private FitBenchmark() {
  }

  /**
   * Entry point; arguments: threads (2), nRef (200000), nObs (2000), Adam epochs (2000),
   * L-BFGS iteration cap (5000, the default stopping rule), random starts of the extra
   * multi-start fit (4; 1 skips it).
   */
  public static void main(String[] args) {
    int threads = args.length > 0 ? Integer.parseInt(args[0]) : 2;
    int nRef = args.length > 1 ? Integer.parseInt(args[1]) : 200_000;
    int nObs = args.length > 2 ? Integer.parseInt(args[2]) : 2_000;
    int epochs = args.length > 3 ? Integer.parseInt(args[3]) : 2_000;
    int maxIterations = args.length > 4 ? Integer.parseInt(args[4])
        : StoppingRule.defaults().maxIterations();
    int starts = args.length > 5 ? Integer.parseInt(args[5]) : 4;
    PrintWriter out = new PrintWriter(System.out, true);
    run(out, threads, nRef, nObs, epochs, maxIterations, starts, null, 9.0, java.util.Set.of("1D", "2D", "5D"));
    out.flush();
  }

  /**
   * The benchmarks' weighted N(0, I_d) reference sample of {@code n} events (see
   * {@link SyntheticData}): {features feature-major, weights}.
   */
  public static double[][] gaussianReference(int d, int n, long seed) {
    return SyntheticData.gaussianReference(d, n, new SplitMix64(seed));
  }

  /**
   * Runs the named cases (of 1D, 2D, 5D) with every fit at {@code clip}, prints the figures to {@code out}, and with
   * {@code exportDir} not null writes each case's training problem and this engine's L-BFGS trajectory there for a
   * side-by-side run of the same fit in another framework ({@link FrameworkExport}).
   */
  public static void run(PrintWriter out, int threads, int nRef, int nObs, int adamEpochs,
              int maxIterations, int starts, java.nio.file.Path exportDir, double clip, java.util.Set<String> cases) {
    out.printf(Locale.ROOT, "FitBenchmark: threads=%d nRef=%d nObs=%d adamEpochs=%d clip=%s kernel=%s%n",
        threads, nRef, nObs, adamEpochs, clip, Kernels.select(KernelChoice.AUTO).name());
    warmUp(threads);
    double[] probe = Kernels.vectorAvailable() ? VectorProbe.measure(20_000) : null;
    if (probe != null) {
      out.printf(Locale.ROOT, "per-element cost on one core: exp(double) %.3f ns, div(double) %.3f ns,"
          + " fma(double, 2 loads) %.3f ns, exp(float) %.3f ns%n",
          probe[0], probe[1], probe[2], probe[3]);
    }
    int bump = Math.max(1, nObs / 50);
    if (cases.contains("1D")) {
      runCase(out, "1D", SyntheticData.exponentialBump(nRef, nObs, bump, 4.0, 0.16, 101L),
          threads, adamEpochs, maxIterations, starts, probe, exportDir, clip);
    }
    if (cases.contains("2D")) {
      runCase(out, "2D", SyntheticData.gaussianBump(new double[] {1.5, 0.0}, 0.25, nRef, nObs,
          bump, 202L), threads, adamEpochs, maxIterations, starts, probe, exportDir, clip);
    }
    if (cases.contains("5D")) {
      runCase(out, "5D", SyntheticData.gaussianBump(new double[] {1.5, 0.0, 0.0, 0.0, 0.0}, 0.25,
          nRef, nObs, bump, 505L), threads, adamEpochs, maxIterations, starts, probe, exportDir, clip);
    }
  }

  private static void warmUp(int threads) {
    TrainingData data = SyntheticData.gaussianShift(new double[] {0.5, 0}, 20_000, 2_000, 1L);
    FitSettings s = FitSettings.defaults().withThreads(threads)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(150));
    RatioTrainer.fit(data, s);
    RatioTrainer.fit(data, s.withKernel(KernelChoice.SCALAR));
    RatioTrainer.fit(data, s.withOptimiser(OptimiserKind.PROFILED_LBFGS));
    RatioTrainer.fit(data, s.withOptimiser(OptimiserKind.ADAM).withAdamEpochs(150));
  }

  private static void runCase(PrintWriter out, String name, TrainingData data, int threads,
                int adamEpochs, int maxIterations, int starts, double[] probe,
                java.nio.file.Path exportDir, double clip) {
    FitSettings base = FitSettings.defaults().withThreads(threads).withHiddenWidths(List.of(5, 5))
        .withClip(clip).withSeed(1L)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(maxIterations));
    Architecture arch = new Architecture(data.features(), base.hiddenWidths(), base.activation());
    int p = arch.parameterCount();
    long events = (long) data.referenceCount() + data.observedCount();
    double vectorEval = secondsPerEvaluation(data, arch, KernelChoice.AUTO, threads);
    double scalarEval = secondsPerEvaluation(data, arch, KernelChoice.SCALAR, threads);
    out.printf(Locale.ROOT, "%n[%s] events=%d parameters=%d%n", name, events, p);
    out.printf(Locale.ROOT, "  evaluation: %s %.3f ms (%.3g events*params/s), scalar %.3f ms (%.3g events*params/s)%n",
        Kernels.select(KernelChoice.AUTO).name(), vectorEval * 1e3, events * p / vectorEval,
        scalarEval * 1e3, events * p / scalarEval);
    if (probe != null) {
      int h = arch.hiddenUnits();
      long weights = 0;
      long prop = 0;
      long biases = 0;
      for (int l = 1; l <= arch.layerCount(); l++) {
        weights += (long) arch.width(l) * arch.width(l - 1);
        biases += arch.width(l);
        if (l >= 2 && l <= arch.hiddenWidths().size()) {
          prop += (long) arch.width(l) * arch.width(l - 1);
        }
      }
      long ops = 2 * weights + biases + prop + 4L * h + 8;
      double perEvent = (h + 1) * probe[0] + h * probe[1] + ops * probe[2];
      double limit = events * perEvent * 1e-9 / threads;
      out.printf(Locale.ROOT, "  arithmetic limit: %d exp + %d div + %d other ops per event -> %.3f ms per evaluation;"
          + " achieved/limit = %.2f%n", h + 1, h, ops, limit * 1e3, vectorEval / limit);
    }
    for (OptimiserKind kind : new OptimiserKind[] {OptimiserKind.PROJECTED_LBFGS, OptimiserKind.PROFILED_LBFGS}) {
      lbfgsCase(out, name, data, base.withOptimiser(kind), starts, kind == OptimiserKind.PROJECTED_LBFGS ? exportDir
          : null);
    }
    for (double lr : new double[] {1e-3, 1e-2}) {
      FitResult ad = RatioTrainer.fit(data, base.withOptimiser(OptimiserKind.ADAM)
          .withAdamEpochs(adamEpochs).withAdamLearningRate(lr));
      out.printf(Locale.ROOT, "  Adam lr=%.0e, %d epochs: %.3f s (%.3f ms/epoch), t = %.4f, loss = %.6f, converged=%s%n",
          lr, adamEpochs, ad.elapsedSeconds(), ad.elapsedSeconds() / adamEpochs * 1e3,
          ad.testStatistic(), ad.finalLoss(), ad.converged());
    }
  }

  /** One L-BFGS variant: a single-start fit with its log, then every start of a multi-start fit. */
  private static void lbfgsCase(PrintWriter out, String name, TrainingData data, FitSettings settings, int starts,
                java.nio.file.Path exportDir) {
    String label = settings.optimiser() == OptimiserKind.PROFILED_LBFGS ? "profiled L-BFGS" : "projected L-BFGS";
    FrameworkExport.Trajectory trajectory = new FrameworkExport.Trajectory();
    FitResult lb = RatioTrainer.fit(data, settings, exportDir != null ? trajectory : TrainingListener.NONE);
    double lbSeconds = lb.elapsedSeconds();
    out.printf(Locale.ROOT, "  %s, loss at iteration (log): %s%n", label, progress(lb.log()));
    out.printf(Locale.ROOT, "  %s: %.3f s, %d iterations, %d evaluations (%.3f ms each), t = %.4f,"
            + " loss = %.6f, converged=%s (%s), |pg|=%.2e%n",
        label, lbSeconds, lb.iterations(), lb.lossEvaluations(), lbSeconds / lb.lossEvaluations() * 1e3,
        lb.testStatistic(), lb.finalLoss(), lb.converged(), lb.stopReason(),
        lb.starts().get(0).projectedGradientNorm());
    if (exportDir != null) {
      try {
        FrameworkExport.write(exportDir, name, data, settings, lb, trajectory);
      } catch (java.io.IOException e) {
        throw new java.io.UncheckedIOException(e);
      }
      out.printf(Locale.ROOT, "  exported the %s problem and trajectory to %s%n", name, exportDir);
    }
    if (starts > 1) {
      FitResult lb4 = RatioTrainer.fit(data, settings.withRestarts(starts));
      out.printf(Locale.ROOT, "  %s, %d starts: %.3f s, %d evaluations, best t = %.4f, start losses %s%n",
          label, starts, lb4.elapsedSeconds(), lb4.lossEvaluations(), lb4.testStatistic(),
          java.util.Arrays.toString(lb4.restartLosses()));
      // the fit is chaotic at clip 9 (contributor guide), so one seed's time and t are one draw:
      // every start's figures, and their spread
      double[] secs = new double[starts];
      double[] ts = new double[starts];
      double[] evals = new double[starts];
      for (RestartSummary r : lb4.starts()) {
        out.printf(Locale.ROOT, "    start %d: %.3f s, %d iterations, %d evaluations, t = %.4f, %s%n", r.index(),
            r.elapsedSeconds(), r.iterations(), r.lossEvaluations(), r.testStatistic(), r.stopReason());
        secs[r.index()] = r.elapsedSeconds();
        ts[r.index()] = r.testStatistic();
        evals[r.index()] = r.lossEvaluations();
      }
      java.util.Arrays.sort(secs);
      java.util.Arrays.sort(ts);
      java.util.Arrays.sort(evals);
      out.printf(Locale.ROOT, "    over the %d starts: seconds %.3f-%.3f (median %.3f), evaluations %.0f-%.0f (median %.1f),"
          + " t %.4f-%.4f (median %.4f)%n", starts, secs[0], secs[starts - 1], median(secs), evals[0],
          evals[starts - 1], median(evals), ts[0], ts[starts - 1], median(ts));
    }
  }

  /** Median of a sorted array. */
  private static double median(double[] sorted) {
    int n = sorted.length;
    return n % 2 == 1 ? sorted[n / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
  }

  /** A few (iteration, loss) pairs of a log. */
  private static String progress(TrainingLog log) {
    StringBuilder sb = new StringBuilder();
    List<LogEntry> e = log.entries();
    int step = Math.max(1, e.size() / 8);
    for (int i = 0; i < e.size(); i += step) {
      sb.append(String.format(Locale.ROOT, "%d:%.3f@%.1fs ", e.get(i).iteration(), e.get(i).loss(),
          e.get(i).elapsedSeconds()));
    }
    LogEntry last = e.get(e.size() - 1);
    sb.append(String.format(Locale.ROOT, "%d:%.3f@%.1fs", last.iteration(), last.loss(), last.elapsedSeconds()));
    return sb.toString();
  }

  private static double secondsPerEvaluation(TrainingData data, Architecture arch,
                        KernelChoice kernel, int threads) {
    RatioTrainer.Problem problem = RatioTrainer.Problem.build(data, arch, LossKind.EXTENDED_LIKELIHOOD);
    double[] theta = RatioTrainer.initialParameters(arch, 3L, 9.0);
    double[] g = new double[theta.length];
    try (Objective o = new Objective(problem.training(), Kernels.select(kernel), threads)) {
      for (int i = 0; i < 20; i++) {
        o.valueAndGradient(theta, g);
      }
      int reps = 60;
      long t0 = System.nanoTime();
      for (int i = 0; i < reps; i++) {
        o.valueAndGradient(theta, g);
      }
      return (System.nanoTime() - t0) * 1e-9 / reps;
    }
  }
}
