package triage.core.ratio;

/**
 * Plain full-batch Adam ("Adam: a method for stochastic optimization", ICLR 2015, Algorithm 1)
 * with weight clipping:
 * m ← β1 m + (1−β1) g, v ← β2 v + (1−β2) g², θ ← P(θ − α m̂ / (√v̂ + ε)) with
 * m̂ = m/(1−β1^t), v̂ = v/(1−β2^t), β1 = 0.9, β2 = 0.999, ε = 1e−8, P the projection onto
 * [−C, C]^P.
 *
 * <p>Runs exactly {@code epochs} steps (one gradient per epoch) and evaluates the final point
 * once more, so it uses epochs + 1 evaluations. "Converged" reports whether the
 * {@link StoppingRule}'s two tests hold at the end (loss change over the last window epochs and
 * projected gradient); the stop reason is always {@link StopReason#EPOCHS_COMPLETED}.
 */
final class Adam {
  /** First-moment decay. */
  static final double BETA1 = 0.9;
  /** Second-moment decay. */
  static final double BETA2 = 0.999;
  /** Denominator guard. */
  static final double EPSILON = 1e-8;

  private Adam() {
  }

  static OptimiserOutcome minimise(DifferentiableFunction fn, double[] start, double bound,
                   double learningRate, int epochs, StoppingRule rule,
                   IterationHook hook, TrainingLog.Recorder log) {
    int n = fn.dimension();
    double[] x = start.clone();
    Box.project(x, bound);
    double[] g = new double[n];
    double[] m = new double[n];
    double[] v = new double[n];
    double[] history = new double[rule.window() + 1];
    double b1t = 1.0;
    double b2t = 1.0;
    double f = 0;
    double pg = 0;
    for (int t = 0; t < epochs; t++) {
      triage.core.Cancellation.check();
      f = fn.valueAndGradient(x, g);
      pg = Box.projectedGradientNorm(x, g, bound);
      history[t % history.length] = f;
      log.offer(t, f, pg);
      hook.after(t, f, pg, x);
      b1t *= BETA1;
      b2t *= BETA2;
      for (int i = 0; i < n; i++) {
        m[i] = BETA1 * m[i] + (1 - BETA1) * g[i];
        v[i] = BETA2 * v[i] + (1 - BETA2) * g[i] * g[i];
        double mh = m[i] / (1 - b1t);
        double vh = v[i] / (1 - b2t);
        x[i] = Math.min(Math.max(x[i] - learningRate * mh / (Math.sqrt(vh) + EPSILON),
            -bound), bound);
      }
    }
    f = fn.valueAndGradient(x, g);
    pg = Box.projectedGradientNorm(x, g, bound);
    history[epochs % history.length] = f;
    log.offer(epochs, f, pg);
    hook.after(epochs, f, pg, x);
    boolean converged = epochs >= rule.window()
        && rule.lossChangeSmall(history[(epochs - rule.window()) % history.length], f)
        && pg <= rule.gradientTolerance();
    return new OptimiserOutcome(x, f, epochs, epochs + 1L, StopReason.EPOCHS_COMPLETED,
        converged, pg, log.finish());
  }
}
