package triage.core.ratio;

/**
 * The extended loss with the output layer profiled out: φ(u) = min over a in [−C, C]^{m+1} of L(u, a), where u are the
 * hidden layers' parameters and a the output layer's m weights and its bias (variable projection: "The
 * differentiation of pseudo-inverses and nonlinear least squares problems whose variables separate", SIAM J. Numer.
 * Anal. 10 (1973) 413).
 *
 * <p>For fixed u the network's output is linear in a, f_i = a·ĥ_i + c with ĥ_i = (h_i, 1) the last hidden layer's
 * activations of event i, so L(u, ·) = Σ A_i (e^{f_i} − 1) − Σ B_i f_i is convex in a, with Hessian
 * Σ A_i e^{f_i} ĥ_i ĥ_iᵀ. Each evaluation runs the forward pass once to get every ĥ_i (and, chunk by chunk while
 * they are in cache, the inner problem's first sums), minimises over a by Newton's
 * method with bounds (each step the exact minimiser of the quadratic model inside the box, then Armijo backtracking
 * along it) started from the previous evaluation's a, then evaluates L and its gradient at (u, a*) with the usual
 * kernel. The box does not depend on u, so by the envelope theorem ∇φ(u) = ∂L/∂u at (u, a*(u)).
 *
 * <p>Why: with the output layer free, L-BFGS spends most of its iterations re-balancing the output weights against
 * the hidden units (saturated units make ĥ's columns nearly collinear with the bias); solved exactly, the 5D fits of
 * {@code bench fit} at clip 9 need about a fifth of the evaluations, at about 2.3× the cost each; on the demo's index
 * (ten times the observed events) they did not need fewer (see DEVELOPERS.md, "Measured figures").
 *
 * <p>Deterministic: the inner sums are taken per chunk of {@link Objective#CHUNK} events, in event order, and the
 * chunks' partials are added in chunk order, with {@link FastExp} and fused multiply-adds only, so the result does not
 * depend on the thread count or the kernel.
 */
final class ProfiledObjective implements DifferentiableFunction {
  /**
   * Inner stop: every component of the inner projected gradient at most this times Σ_i (A_i e^{f_i} + B_i), the scale
   * of the sums that make it (about twice the observed count near a minimum).
   */
  static final double INNER_TOLERANCE = 1e-10;
  /**
   * Inner stop: a Newton decrement below this relative to the loss, where rounding decides (this ends about a fifth
   * of the inner solves, with the inner gradient up to about 3e−9 of the scale above: one more exact Newton step then
   * moves the outer gradient by about 1e−6, far below the outer stopping rule's 1e−2).
   */
  static final double DECREMENT_FLOOR = 1e-15;
  /**
   * Values (doubles) of activations kept at most for all hidden layers (256 MB), beyond which only the last layer is
   * kept and the full evaluation runs its own forward pass.
   */
  static final long KEEP_ALL_LIMIT = 32L << 20;
  /** Values (doubles) of the last hidden layer's activations at most (512 MB), which the inner problem needs. */
  static final long LAST_LAYER_LIMIT = 64L << 20;
  /** Inner Newton iterations at most per evaluation. */
  static final int INNER_ITERATIONS = 50;
  /** Backtracking trials at most per inner iteration. */
  static final int INNER_TRIALS = 40;

  /** The full-parameter loss. */
  private final Objective full;
  /** The batch. */
  private final Batch batch;
  /** Clip bound. */
  private final double clip;
  /** Width of the last hidden layer (m). */
  private final int m;
  /** Offset of the output weights in θ. */
  private final int outWeights;
  /** Offset of the output bias in θ. */
  private final int outBias;
  /** Indices in θ of the profiled-over (outer) parameters u. */
  private final int[] outer;
  /** Current full parameter vector (u, a). */
  private final double[] theta;
  /** Full gradient buffer. */
  private final double[] gradient;
  /** Hidden layers' activations, acts[l][j·n + i]; only the last one when all would take too much memory. */
  private final double[][] acts;
  /** Whether every layer is kept, so the full evaluation skips its forward pass. */
  private final boolean keepsAll;
  /** Last hidden layer's activations, h[j·n + i]. */
  private final double[] h;
  /** Per-chunk inner partials: loss, gradient (m + 1), Hessian lower triangle. */
  private final double[][] parts;
  /** Σ_i (A_i e^{f_i} + B_i) of the last pass with derivatives. */
  private double gradientScale;
  /** Output parameters of the pass in progress. */
  private double[] passA;
  /** Whether the pass in progress adds gradient and Hessian. */
  private boolean passDerivatives;

  ProfiledObjective(Objective full, double clip, double[] start) {
    this.full = full;
    this.batch = full.batch();
    Architecture arch = batch.arch;
    if (arch.hiddenWidths().isEmpty()) {
      throw new IllegalArgumentException("profiling the output layer needs at least one hidden layer");
    }
    if (batch.loss != LossKind.EXTENDED_LIKELIHOOD) {
      throw new IllegalArgumentException("profiling the output layer is for the extended loss");
    }
    for (double w : batch.coefA) {
      if (w < 0) {
        throw new IllegalArgumentException("profiling the output layer needs reference weights >= 0 (the output "
            + "layer's problem is convex only then)");
      }
    }
    this.clip = clip;
    int layers = arch.layerCount();
    this.m = arch.width(layers - 1);
    this.outWeights = arch.weightOffset(layers);
    this.outBias = arch.biasOffset(layers);
    int p = arch.parameterCount();
    this.outer = new int[p - m - 1];
    int k = 0;
    for (int i = 0; i < p; i++) {
      if (!isOutput(i)) {
        outer[k++] = i;
      }
    }
    this.theta = start.clone();
    Box.project(theta, clip);
    this.gradient = new double[p];
    int hidden = arch.hiddenWidths().size();
    long units = 0;
    for (int w : arch.hiddenWidths()) {
      units += w;
    }
    if ((long) m * batch.n > LAST_LAYER_LIMIT) {
      throw new IllegalArgumentException("the profiled optimiser keeps the last hidden layer's " + m + " activations "
          + "of every event, " + ((long) m * batch.n * 8 >> 20) + " MB here, above its limit of "
          + (LAST_LAYER_LIMIT * 8 >> 20) + " MB: use lbfgs");
    }
    this.keepsAll = hidden == 1 || units * batch.n <= KEEP_ALL_LIMIT;
    this.acts = new double[hidden][];
    for (int l = 0; l < hidden; l++) {
      if (keepsAll || l == hidden - 1) {
        acts[l] = new double[arch.hiddenWidths().get(l) * batch.n];
      }
    }
    this.h = acts[hidden - 1];
    this.parts = new double[full.chunks()][Kernel.outputSlots(m)];
  }

  private boolean isOutput(int i) {
    return (i >= outWeights && i < outWeights + m) || i == outBias;
  }

  @Override
  public int dimension() {
    return outer.length;
  }

  /** The hidden layers' parameters of a full parameter vector. */
  double[] reduce(double[] fullTheta) {
    double[] u = new double[outer.length];
    for (int i = 0; i < outer.length; i++) {
      u[i] = fullTheta[outer[i]];
    }
    return u;
  }

  /** The full parameters (u, a*(u)) of the last evaluation (a copy). */
  double[] lastFull() {
    return theta.clone();
  }

  @Override
  public double valueAndGradient(double[] u, double[] g) {
    for (int i = 0; i < outer.length; i++) {
      theta[outer[i]] = u[i];
    }
    Kernel kernel = full.kernel();
    // the inner problem's first pass (at the previous evaluation's output parameters) chunk by chunk right after the
    // forward pass, while the chunk's last hidden layer is still in cache: the same sums as a separate pass
    double[] a = outputParameters();
    passA = a;
    passDerivatives = true;
    full.forEachChunk((c, start, end, ws) -> {
      kernel.hidden(batch, theta, start, end, ws, acts);
      chunk(c, start, end, ws);
    });
    minimiseOutput(a);
    double loss = keepsAll ? full.valueAndGradient(theta, acts, gradient) : full.valueAndGradient(theta, gradient);
    for (int i = 0; i < outer.length; i++) {
      g[i] = gradient[outer[i]];
    }
    return loss;
  }

  /** The output layer's weights and bias, as now in θ. */
  private double[] outputParameters() {
    double[] a = new double[m + 1];
    for (int j = 0; j < m; j++) {
      a[j] = theta[outWeights + j];
    }
    a[m] = theta[outBias];
    return a;
  }

  /**
   * Newton's method with bounds over the output parameters, from {@code start} (their values in θ, at which the
   * chunks' partials already hold the first pass): each step minimises the
   * quadratic model inside the box exactly ({@link #boxNewtonStep}), then backtracks along it (Armijo) if the loss
   * does not fall enough; the step stays in the box, so no projection bends it.
   */
  private void minimiseOutput(double[] start) {
    int q = m + 1;
    double[] a = start;
    double[] g = new double[q];
    double[][] hess = new double[q][q];
    double[] dir = new double[q];
    double[] trial = new double[q];
    double[] trialG = new double[q];
    double[][] trialHess = new double[q][q];
    // every pass computes the derivatives too: an accepted trial's are the next iteration's, and most trials are
    // accepted, so this takes fewer passes than value-only trials followed by a derivative pass
    double value = gather(true, g, hess);
    for (int it = 0; it < INNER_ITERATIONS; it++) {
      double largest = 0;
      for (int j = 0; j < q; j++) {
        boolean stuck = (a[j] <= -clip && g[j] > 0) || (a[j] >= clip && g[j] < 0);
        if (!stuck) {
          largest = Math.max(largest, Math.abs(g[j]));
        }
      }
      if (largest <= INNER_TOLERANCE * gradientScale) {
        break;
      }
      boxNewtonStep(hess, g, a, clip, dir);
      double slope = 0;
      for (int j = 0; j < q; j++) {
        slope += g[j] * dir[j];
      }
      if (-slope <= DECREMENT_FLOOR * (1.0 + Math.abs(value))) {
        break;
      }
      double step = 1.0;
      boolean accepted = false;
      for (int t = 0; t < INNER_TRIALS; t++) {
        for (int j = 0; j < q; j++) {
          double v = Math.max(-clip, Math.min(clip, a[j] + step * dir[j]));
          // a + (±C − a) can miss ±C by an ulp: a step meant for the bound lands on it
          trial[j] = Math.abs(Math.abs(v) - clip) <= 2 * Math.ulp(clip) ? Math.copySign(clip, v) : v;
        }
        double v = pass(trial, true, trialG, trialHess);
        if (v <= value + ProjectedLbfgs.ARMIJO * step * slope) {
          accepted = true;
          value = v;
          break;
        }
        step *= 0.5;
      }
      if (!accepted) {
        break;
      }
      double[] swap = a;
      a = trial;
      trial = swap;
      swap = g;
      g = trialG;
      trialG = swap;
      double[][] swapHess = hess;
      hess = trialHess;
      trialHess = swapHess;
    }
    for (int j = 0; j < m; j++) {
      theta[outWeights + j] = a[j];
    }
    theta[outBias] = a[m];
  }

  /**
   * The step d minimising g·d + ½ dᵀH d subject to −C ≤ a + d ≤ C, by the primal active-set method for convex
   * quadratic programs (<i>Numerical Optimization</i>, 2nd ed., Alg. 16.3): from d = 0, Newton steps on the variables
   * not held at a bound, cut at the first bound they meet (which is then held), and a held variable released when
   * the model's gradient pulls it back inside. H gets a diagonal ridge of 1e−12 of its largest diagonal element, which
   * keeps it positive definite when saturated hidden units make columns of ĥ nearly equal.
   */
  static void boxNewtonStep(double[][] hess, double[] g, double[] a, double clip, double[] d) {
    int q = g.length;
    double scale = 0;
    double gMax = 0;
    for (int j = 0; j < q; j++) {
      scale = Math.max(scale, hess[j][j]);
      gMax = Math.max(gMax, Math.abs(g[j]));
    }
    double ridge = 1e-12 * scale + Double.MIN_NORMAL;
    double[] lo = new double[q];
    double[] hi = new double[q];
    boolean[] held = new boolean[q];
    double[] grad = new double[q];
    double[] p = new double[q];
    double[][] l = new double[q][q];
    for (int j = 0; j < q; j++) {
      d[j] = 0;
      lo[j] = -clip - a[j];
      hi[j] = clip - a[j];
      held[j] = (lo[j] >= 0 && g[j] > 0) || (hi[j] <= 0 && g[j] < 0);
    }
    // a multiplier counts as wrong-signed only beyond rounding of the model's gradient
    double releaseTolerance = 1e-12 * (gMax + scale * 2 * clip);
    boolean faceSolved = false;
    for (int round = 0; round < 4 * q + 8; round++) {
      for (int j = 0; j < q; j++) {
        double s = g[j];
        for (int k = 0; k < q; k++) {
          s = Math.fma(hess[j][k] + (j == k ? ridge : 0.0), d[k], s);
        }
        grad[j] = s;
      }
      if (faceSolved) {
        // the minimum on the current face: release the held variable whose multiplier has the wrong sign, if any
        int release = -1;
        double worst = releaseTolerance;
        for (int j = 0; j < q; j++) {
          if (held[j]) {
            double pull = d[j] == lo[j] ? -grad[j] : grad[j];
            if (pull > worst) {
              worst = pull;
              release = j;
            }
          }
        }
        if (release < 0) {
          return;
        }
        held[release] = false;
        faceSolved = false;
        continue;
      }
      solveFree(hess, ridge, grad, held, l, p);
      for (int j = 0; j < q; j++) {
        if (!Double.isFinite(p[j])) {
          // no curvature to go by (H = 0 on the free set): no step; the caller's slope test then stops
          java.util.Arrays.fill(d, 0.0);
          return;
        }
      }
      double alpha = 1.0;
      int blocking = -1;
      for (int j = 0; j < q; j++) {
        if (held[j] || p[j] == 0) {
          continue;
        }
        double limit = ((p[j] < 0 ? lo[j] : hi[j]) - d[j]) / p[j];
        if (limit < alpha) {
          alpha = Math.max(0.0, limit);
          blocking = j;
        }
      }
      for (int j = 0; j < q; j++) {
        if (!held[j]) {
          d[j] = Math.max(lo[j], Math.min(hi[j], d[j] + alpha * p[j]));
        }
      }
      if (blocking >= 0) {
        d[blocking] = p[blocking] < 0 ? lo[blocking] : hi[blocking];
        held[blocking] = true;
      } else {
        // the full Newton step on this face: d minimises the model there (exactly, up to rounding)
        faceSolved = true;
      }
    }
  }

  /** p_F = −(H_FF + ridge I)⁻¹ grad_F by Cholesky on the variables not held; p = 0 on the held ones. */
  private static void solveFree(double[][] hess, double ridge, double[] grad, boolean[] held, double[][] l,
      double[] p) {
    int q = grad.length;
    for (int i = 0; i < q; i++) {
      p[i] = 0;
      if (held[i]) {
        continue;
      }
      for (int j = 0; j <= i; j++) {
        if (held[j]) {
          continue;
        }
        double s = hess[i][j] + (i == j ? ridge : 0.0);
        for (int k = 0; k < j; k++) {
          if (!held[k]) {
            s -= l[i][k] * l[j][k];
          }
        }
        l[i][j] = i == j ? Math.sqrt(Math.max(s, ridge)) : s / l[j][j];
      }
    }
    for (int i = 0; i < q; i++) {
      if (!held[i]) {
        double s = -grad[i];
        for (int k = 0; k < i; k++) {
          if (!held[k]) {
            s -= l[i][k] * p[k];
          }
        }
        p[i] = s / l[i][i];
      }
    }
    for (int i = q - 1; i >= 0; i--) {
      if (!held[i]) {
        double s = p[i];
        for (int k = i + 1; k < q; k++) {
          if (!held[k]) {
            s -= l[k][i] * p[k];
          }
        }
        p[i] = s / l[i][i];
      }
    }
  }

  /** L(u, a) over all events, and with {@code derivatives} its gradient and Hessian in a (chunk order). */
  private double pass(double[] a, boolean derivatives, double[] g, double[][] hess) {
    passA = a;
    passDerivatives = derivatives;
    full.forEachChunk(this::chunk);
    return gather(derivatives, g, hess);
  }

  /** The loss, and with {@code derivatives} its gradient and Hessian in a, from the chunks' partials (chunk order). */
  private double gather(boolean derivatives, double[] g, double[][] hess) {
    int q = m + 1;
    double value = 0;
    double scale = 0;
    if (derivatives) {
      java.util.Arrays.fill(g, 0.0);
      for (double[] row : hess) {
        java.util.Arrays.fill(row, 0.0);
      }
    }
    for (double[] part : parts) {
      value += part[0];
      if (derivatives) {
        scale += part[1];
        for (int j = 0; j < q; j++) {
          g[j] += part[2 + j];
        }
        int o = 2 + q;
        for (int j = 0; j < q; j++) {
          for (int k = 0; k <= j; k++) {
            hess[j][k] += part[o++];
          }
        }
      }
    }
    if (derivatives) {
      for (int j = 0; j < q; j++) {
        for (int k = 0; k < j; k++) {
          hess[k][j] = hess[j][k];
        }
      }
      gradientScale = scale;
    }
    return value;
  }

  /** One chunk's inner sums through the kernel, its eight lanes per slot added in lane order. */
  private void chunk(int c, int start, int end, Batch.Workspace ws) {
    double[] lanes = ws.outputLanes;
    java.util.Arrays.fill(lanes, 0.0);
    full.kernel().outputSums(batch, h, passA, start, end, passDerivatives, ws);
    double[] part = parts[c];
    Kernel.sumLanes(lanes, part, passDerivatives ? part.length : 2);
  }

}
