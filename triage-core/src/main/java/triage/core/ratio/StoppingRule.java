package triage.core.ratio;

/**
 * Stopping rule of the quasi-Newton optimiser (and the convergence check applied to Adam).
 *
 * <p>After iteration k the fit has <b>converged</b> when both hold:
 * <ol>
 *   <li>k ≥ window and |L_{k−window} − L_k| ≤ relativeTolerance · max(|L_k|, 1)
 *       (relative loss change over the window);</li>
 *   <li>‖P(θ − ∇L) − θ‖_∞ ≤ gradientTolerance, the infinity norm of the projected gradient
 *       (components that point out of the clip box at an active bound count as zero).</li>
 * </ol>
 * The optimiser stops at the first converged iteration or after {@code maxIterations}.
 *
 * @param maxIterations     iteration cap, ≥ 1
 * @param relativeTolerance relative loss-change tolerance, ≥ 0
 * @param window            number of iterations over which the loss change is measured, ≥ 1
 * @param gradientTolerance projected-gradient infinity-norm tolerance, ≥ 0 (in loss units per
 *                          parameter unit; the loss is a sum over events)
 */
public record StoppingRule(int maxIterations, double relativeTolerance, int window,
              double gradientTolerance) {

  /** Validates the ranges. */
  public StoppingRule {
    if (maxIterations < 1) {
      throw new IllegalArgumentException("maxIterations must be >= 1: " + maxIterations);
    }
    if (!(relativeTolerance >= 0) || Double.isInfinite(relativeTolerance)) {
      throw new IllegalArgumentException("relativeTolerance must be finite and >= 0");
    }
    if (window < 1) {
      throw new IllegalArgumentException("window must be >= 1: " + window);
    }
    if (!(gradientTolerance >= 0) || Double.isInfinite(gradientTolerance)) {
      throw new IllegalArgumentException("gradientTolerance must be finite and >= 0");
    }
  }

  /**
   * Default rule: 5,000 iterations, relative loss change ≤ 1e−8 over 20 iterations, projected
   * gradient ≤ 1e−2 (the loss is a sum over ~N_obs events, so its gradient is O(N_obs) far from
   * a minimum).
   */
  public static StoppingRule defaults() {
    return new StoppingRule(5000, 1e-8, 20, 1e-2);
  }

  /** Copy with another iteration cap. */
  public StoppingRule withMaxIterations(int value) {
    return new StoppingRule(value, relativeTolerance, window, gradientTolerance);
  }

  /** Copy with another relative loss-change tolerance. */
  public StoppingRule withRelativeTolerance(double value) {
    return new StoppingRule(maxIterations, value, window, gradientTolerance);
  }

  /** Copy with another window. */
  public StoppingRule withWindow(int value) {
    return new StoppingRule(maxIterations, relativeTolerance, value, gradientTolerance);
  }

  /** Copy with another projected-gradient tolerance. */
  public StoppingRule withGradientTolerance(double value) {
    return new StoppingRule(maxIterations, relativeTolerance, window, value);
  }

  /** Whether the relative-change part holds between two losses {@code window} iterations apart. */
  boolean lossChangeSmall(double older, double newer) {
    return Math.abs(older - newer) <= relativeTolerance * Math.max(Math.abs(newer), 1.0);
  }
}
