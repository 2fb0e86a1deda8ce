package triage.core.ratio;

import java.util.List;

/**
 * Everything that determines a fit besides the data. Two fits with equal settings (the thread
 * count and kernel choice excepted, which never change the result) on equal data return the same
 * parameters and test statistic bit for bit.
 *
 * @param hiddenWidths     hidden-layer widths, each ≥ 1 (e.g. [5, 5])
 * @param activation       hidden activation
 * @param loss             training loss
 * @param clip             weight-clipping bound C ≥ {@link #MIN_CLIP}: every weight and bias stays in [−C, C]
 * @param seed             run seed; start r uses {@code SplitMix64.derive(seed, r)}
 * @param threads          worker threads ≥ 1 (does not change results)
 * @param optimiser        optimiser
 * @param stoppingRule     stopping rule of the quasi-Newton method and convergence test for Adam
 * @param restarts         number of random starts ≥ 1; the lowest final loss is kept
 * @param adamLearningRate Adam step size α &gt; 0
 * @param adamEpochs       Adam epoch count ≥ 1 (one full-batch gradient per epoch)
 * @param lbfgsMemory      number of stored curvature pairs m ≥ 1
 * @param kernel           evaluation kernel (does not change results)
 * @param logCapacity      maximum number of training-log entries ≥ 2
 */
public record FitSettings(List<Integer> hiddenWidths, Activation activation, LossKind loss,
             double clip, long seed, int threads, OptimiserKind optimiser,
             StoppingRule stoppingRule, int restarts, double adamLearningRate,
             int adamEpochs, int lbfgsMemory, KernelChoice kernel, int logCapacity) {

  /** Most hidden layers. */
  public static final int MAX_LAYERS = 32;

  /** Widest hidden layer. */
  public static final int MAX_WIDTH = 4096;

  /** Most threads. */
  public static final int MAX_THREADS = 1024;

  /**
   * Smallest clip. The output is a sum of at most (last width + 1) terms each within [−C, C] (activations lie in
   * [−1, 1]), so |f| ≤ C·(width + 1): below this the network is 0 to the fit's resolution, t is 0 for any data, and
   * products of parameters reach subnormal numbers. A value this small is a slip, not a regulariser.
   */
  public static final double MIN_CLIP = 1e-6;

  /** Validates every field. */
  public FitSettings {
    hiddenWidths = List.copyOf(hiddenWidths);
    // Bounds far above any useful network, so that a typing slip gets a message instead of exhausting memory.
    if (hiddenWidths.size() > MAX_LAYERS) {
      throw new IllegalArgumentException("at most " + MAX_LAYERS + " hidden layers: " + hiddenWidths);
    }
    for (int w : hiddenWidths) {
      if (w < 1 || w > MAX_WIDTH) {
        throw new IllegalArgumentException("hidden widths must be between 1 and " + MAX_WIDTH + ": "
            + hiddenWidths);
      }
    }
    if (activation == null || loss == null || optimiser == null || stoppingRule == null
        || kernel == null) {
      throw new IllegalArgumentException("null setting");
    }
    if (optimiser == OptimiserKind.PROFILED_LBFGS
        && (loss != LossKind.EXTENDED_LIKELIHOOD || hiddenWidths.isEmpty())) {
      throw new IllegalArgumentException("the profiled optimiser needs the extended loss and at least one hidden "
          + "layer (its output layer is solved exactly); use lbfgs");
    }
    if (!(clip >= MIN_CLIP) || Double.isInfinite(clip)) {
      throw new IllegalArgumentException("clip must be finite and at least " + MIN_CLIP + " (below that the network's "
          + "output is held within a few times the clip of 0, so t is 0 for any data): " + clip);
    }
    if (threads < 1 || threads > MAX_THREADS) {
      throw new IllegalArgumentException("threads must be between 1 and " + MAX_THREADS + ": " + threads);
    }
    if (restarts < 1) {
      throw new IllegalArgumentException("restarts must be >= 1: " + restarts);
    }
    if (!(adamLearningRate > 0) || Double.isInfinite(adamLearningRate)) {
      throw new IllegalArgumentException("adamLearningRate must be finite and > 0");
    }
    if (adamEpochs < 1) {
      throw new IllegalArgumentException("adamEpochs must be >= 1: " + adamEpochs);
    }
    if (lbfgsMemory < 1) {
      throw new IllegalArgumentException("lbfgsMemory must be >= 1: " + lbfgsMemory);
    }
    if (logCapacity < 2) {
      throw new IllegalArgumentException("logCapacity must be >= 2: " + logCapacity);
    }
  }

  /**
   * The common case: widths [5, 5], sigmoid, extended likelihood, clip 9, seed 1, all available
   * processors, projected L-BFGS with memory 10 to {@link StoppingRule#defaults()}, one start,
   * Adam α = 1e−3 for 2,000 epochs if selected, automatic kernel, log of 1,000 entries.
   */
  public static FitSettings defaults() {
    return new FitSettings(List.of(5, 5), Activation.SIGMOID, LossKind.EXTENDED_LIKELIHOOD,
        9.0, 1L, Runtime.getRuntime().availableProcessors(), OptimiserKind.PROJECTED_LBFGS,
        StoppingRule.defaults(), 1, 1e-3, 2000, 10, KernelChoice.AUTO, 1000);
  }

  /** Copy with other hidden widths. */
  public FitSettings withHiddenWidths(List<Integer> v) {
    return new FitSettings(v, activation, loss, clip, seed, threads, optimiser, stoppingRule,
        restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another activation. */
  public FitSettings withActivation(Activation v) {
    return new FitSettings(hiddenWidths, v, loss, clip, seed, threads, optimiser, stoppingRule,
        restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another loss. */
  public FitSettings withLoss(LossKind v) {
    return new FitSettings(hiddenWidths, activation, v, clip, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel,
        logCapacity);
  }

  /** Copy with another clip bound. */
  public FitSettings withClip(double v) {
    return new FitSettings(hiddenWidths, activation, loss, v, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel,
        logCapacity);
  }

  /** Copy with another seed. */
  public FitSettings withSeed(long v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, v, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel,
        logCapacity);
  }

  /** Copy with another thread count. */
  public FitSettings withThreads(int v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, v, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel,
        logCapacity);
  }

  /** Copy with another optimiser. */
  public FitSettings withOptimiser(OptimiserKind v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, v,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel,
        logCapacity);
  }

  /** Copy with another stopping rule. */
  public FitSettings withStoppingRule(StoppingRule v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser, v,
        restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another number of random starts. */
  public FitSettings withRestarts(int v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, v, adamLearningRate, adamEpochs, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another Adam learning rate. */
  public FitSettings withAdamLearningRate(double v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, restarts, v, adamEpochs, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another Adam epoch count. */
  public FitSettings withAdamEpochs(int v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, v, lbfgsMemory, kernel, logCapacity);
  }

  /** Copy with another L-BFGS memory. */
  public FitSettings withLbfgsMemory(int v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, v, kernel, logCapacity);
  }

  /** Copy with another kernel choice. */
  public FitSettings withKernel(KernelChoice v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, v, logCapacity);
  }

  /** Copy with another log capacity. */
  public FitSettings withLogCapacity(int v) {
    return new FitSettings(hiddenWidths, activation, loss, clip, seed, threads, optimiser,
        stoppingRule, restarts, adamLearningRate, adamEpochs, lbfgsMemory, kernel, v);
  }
}
