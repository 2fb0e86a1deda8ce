package triage.core.ratio;

/**
 * Projected limited-memory BFGS for min L(θ) subject to −C ≤ θ_i ≤ C.
 *
 * <p>Iteration (<i>Numerical Optimization</i>, 2nd ed., §7.2 and §16.7; two-metric projection as
 * in "Two-metric projection methods for constrained optimization", <i>SIAM J. Control Optim.</i>
 * 22 (1984) 936):
 * <ol>
 *   <li>ε-active set A = {i : θ_i ≤ −C + ε and g_i &gt; 0, or θ_i ≥ C − ε and g_i &lt; 0} with
 *       ε = min(10^{−3} C, ‖P(θ − g) − θ‖_∞), so variables close to a bound and pushed against it
 *       are moved onto it, and the set shrinks to the exactly active set near a solution.</li>
 *   <li>Direction: on the free set F, d_F = −H_F g_F from the two-loop recursion (Alg. 7.4) with
 *       all stored pairs restricted to F (a pair whose restricted curvature s_F·y_F is not
 *       positive is skipped); H_F^0 = γ I with γ = s_F·y_F / y_F·y_F of the newest usable pair.
 *       On A, d_A = −γ g_A (scaled steepest descent, which the projection turns into "stay on the
 *       bound"). If d is not a descent direction the memory is cleared.</li>
 *   <li>Armijo backtracking along the projection arc θ(α) = P(θ + α d):
 *       L(θ(α)) ≤ L(θ) + 10^{−4} g·(θ(α) − θ), α from 1, safeguarded quadratic interpolation in
 *       [0.1 α, 0.5 α], at most 40 trials.</li>
 *   <li>Pair (s, y) = (θ_+ − θ, g_+ − g) stored (memory m) if s·y &gt; 10^{−10} y·y.</li>
 * </ol>
 * Every trial point lies in the box. On a failed line search the memory is cleared and a scaled
 * projected steepest-descent step is tried; if that fails too the run stops with
 * {@link StopReason#LINE_SEARCH_FAILED}. Otherwise it stops by the {@link StoppingRule} (or at
 * once if the projected gradient is exactly zero, a KKT point).
 */
final class ProjectedLbfgs {
  /** Sufficient-decrease constant. */
  static final double ARMIJO = 1e-4;
  /** Maximum trials per line search. */
  static final int MAX_TRIALS = 40;
  /** Active-set width relative to the bound. */
  static final double ACTIVE_WIDTH = 1e-3;

  private ProjectedLbfgs() {
  }

  static OptimiserOutcome minimise(DifferentiableFunction fn, double[] start, double bound,
                   int memory, StoppingRule rule, IterationHook hook,
                   TrainingLog.Recorder log) {
    final int n = fn.dimension();
    double[] x = start.clone();
    Box.project(x, bound);
    double[] g = new double[n];
    double f = fn.valueAndGradient(x, g);
    long evaluations = 1;
    double pg = Box.projectedGradientNorm(x, g, bound);
    double[] history = new double[rule.window() + 1];
    history[0] = f;
    log.offer(0, f, pg);
    hook.after(0, f, pg, x);

    double[][] sMem = new double[memory][n];
    double[][] yMem = new double[memory][n];
    int stored = 0;
    int newest = -1;
    double gamma = Double.NaN;
    boolean[] free = new boolean[n];
    double[] d = new double[n];
    double[] q = new double[n];
    double[] alphaTmp = new double[memory];
    double[] rhoTmp = new double[memory];
    double[] xt = new double[n];
    double[] gt = new double[n];
    int[] trialCount = new int[1];
    int iteration = 0;
    StopReason reason = StopReason.MAX_ITERATIONS;
    boolean converged = false;
    if (pg == 0) {
      return new OptimiserOutcome(x, f, 0, evaluations, StopReason.CONVERGED, true, pg,
          log.finish());
    }
    while (iteration < rule.maxIterations()) {
      triage.core.Cancellation.check();
      double gInf = 0;
      for (int i = 0; i < n; i++) {
        gInf = Math.max(gInf, Math.abs(g[i]));
      }
      double steepScale = stored > 0 ? gamma : 1.0 / gInf;
      double eps = Math.min(ACTIVE_WIDTH * bound, pg);
      for (int i = 0; i < n; i++) {
        free[i] = !((x[i] <= -bound + eps && g[i] > 0) || (x[i] >= bound - eps && g[i] < 0));
      }
      boolean quasiNewton = stored > 0;
      if (quasiNewton) {
        // two-loop recursion on the free set
        for (int i = 0; i < n; i++) {
          q[i] = free[i] ? g[i] : 0.0;
        }
        double gammaF = Double.NaN;
        for (int c = 0; c < stored; c++) {
          int idx = Math.floorMod(newest - c, memory);
          double[] s = sMem[idx];
          double[] y = yMem[idx];
          double sy = 0;
          double yy = 0;
          double sq = 0;
          for (int i = 0; i < n; i++) {
            if (free[i]) {
              sy += s[i] * y[i];
              yy += y[i] * y[i];
              sq += s[i] * q[i];
            }
          }
          if (!(sy > 1e-12 * yy) || yy == 0) {
            rhoTmp[c] = 0;
            alphaTmp[c] = 0;
            continue;
          }
          if (Double.isNaN(gammaF)) {
            gammaF = sy / yy;
          }
          double rho = 1.0 / sy;
          double a = rho * sq;
          rhoTmp[c] = rho;
          alphaTmp[c] = a;
          for (int i = 0; i < n; i++) {
            if (free[i]) {
              q[i] -= a * y[i];
            }
          }
        }
        if (Double.isNaN(gammaF)) {
          gammaF = steepScale;
        }
        for (int i = 0; i < n; i++) {
          q[i] *= gammaF;
        }
        for (int c = stored - 1; c >= 0; c--) {
          if (rhoTmp[c] == 0) {
            continue;
          }
          int idx = Math.floorMod(newest - c, memory);
          double[] s = sMem[idx];
          double[] y = yMem[idx];
          double yr = 0;
          for (int i = 0; i < n; i++) {
            if (free[i]) {
              yr += y[i] * q[i];
            }
          }
          double beta = rhoTmp[c] * yr;
          double coef = alphaTmp[c] - beta;
          for (int i = 0; i < n; i++) {
            if (free[i]) {
              q[i] += coef * s[i];
            }
          }
        }
        double gd = 0;
        double gn = 0;
        double dn = 0;
        for (int i = 0; i < n; i++) {
          d[i] = free[i] ? -q[i] : -steepScale * g[i];
          if (free[i]) {
            gd += g[i] * d[i];
            gn += g[i] * g[i];
            dn += d[i] * d[i];
          }
        }
        if (!(gd < -1e-14 * Math.sqrt(gn * dn)) && gn > 0) {
          quasiNewton = false;
          stored = 0;
        }
      }
      if (!quasiNewton) {
        for (int i = 0; i < n; i++) {
          d[i] = -steepScale * g[i];
        }
      }
      double ft = lineSearch(fn, x, f, g, d, bound, xt, gt, trialCount);
      evaluations += trialCount[0];
      if (Double.isNaN(ft)) {
        if (quasiNewton) {
          stored = 0;
          continue;
        }
        reason = StopReason.LINE_SEARCH_FAILED;
        converged = pg <= rule.gradientTolerance();
        break;
      }
      iteration++;
      double sy = 0;
      double yy = 0;
      int slot = (newest + 1) % memory;
      double[] s = sMem[slot];
      double[] y = yMem[slot];
      for (int i = 0; i < n; i++) {
        s[i] = xt[i] - x[i];
        y[i] = gt[i] - g[i];
        sy += s[i] * y[i];
        yy += y[i] * y[i];
      }
      if (sy > 1e-10 * yy && yy > 0) {
        newest = slot;
        stored = Math.min(stored + 1, memory);
        gamma = sy / yy;
      }
      System.arraycopy(xt, 0, x, 0, n);
      System.arraycopy(gt, 0, g, 0, n);
      f = ft;
      pg = Box.projectedGradientNorm(x, g, bound);
      history[iteration % history.length] = f;
      log.offer(iteration, f, pg);
      hook.after(iteration, f, pg, x);
      if (pg == 0) {
        reason = StopReason.CONVERGED;
        converged = true;
        break;
      }
      if (iteration >= rule.window()
          && rule.lossChangeSmall(history[(iteration - rule.window()) % history.length], f)
          && pg <= rule.gradientTolerance()) {
        reason = StopReason.CONVERGED;
        converged = true;
        break;
      }
    }
    return new OptimiserOutcome(x, f, iteration, evaluations, reason, converged, pg,
        log.finish());
  }

  /**
   * Armijo search along P(x + α d); on success fills xt, gt and returns the loss, else NaN;
   * the number of evaluations is written to {@code trialCount[0]}.
   */
  private static double lineSearch(DifferentiableFunction fn, double[] x, double f, double[] g,
                   double[] d, double bound, double[] xt, double[] gt,
                   int[] trialCount) {
    int n = x.length;
    double slope = 0;
    for (int i = 0; i < n; i++) {
      slope += g[i] * d[i];
    }
    double alpha = 1.0;
    int trials = 0;
    while (trials < MAX_TRIALS) {
      boolean moved = false;
      double decrease = 0;
      for (int i = 0; i < n; i++) {
        double v = Math.min(Math.max(x[i] + alpha * d[i], -bound), bound);
        xt[i] = v;
        moved |= v != x[i];
        decrease += g[i] * (v - x[i]);
      }
      if (!moved) {
        break;
      }
      double ft = fn.valueAndGradient(xt, gt);
      trials++;
      if (Double.isFinite(ft) && decrease < 0 && ft <= f + ARMIJO * decrease) {
        trialCount[0] = trials;
        return ft;
      }
      double next;
      if (Double.isFinite(ft) && slope < 0) {
        double denom = 2.0 * (ft - f - slope * alpha);
        next = denom > 0 ? -slope * alpha * alpha / denom : 0.5 * alpha;
        next = Math.min(Math.max(next, 0.1 * alpha), 0.5 * alpha);
      } else {
        next = 0.1 * alpha;
      }
      alpha = next;
    }
    trialCount[0] = trials;
    return Double.NaN;
  }
}
