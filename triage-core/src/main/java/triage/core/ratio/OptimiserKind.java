package triage.core.ratio;

/**
 * Optimiser used to minimise the loss inside the clip box [−C, C]^P.
 *
 * <ul>
 *   <li>{@link #PROJECTED_LBFGS}: limited-memory BFGS (<i>Numerical Optimization</i>, 2nd
 *       ed., Alg. 7.4) restricted to the free variables, with the two-metric projection treatment of
 *       the ε-active set ("Projected Newton methods for optimization problems with simple
 *       constraints", <i>SIAM J. Control Optim.</i> 20 (1982) 221) and an Armijo backtracking
 *       search along the projection arc. Runs to the {@link StoppingRule}.</li>
 *   <li>{@link #ADAM}: plain Adam ("Adam: a method for stochastic optimization", ICLR 2015)
 *       with β1 = 0.9, β2 = 0.999, ε = 1e−8,
 *       full batch, a fixed number of epochs, parameters clipped after every step.</li>
 *   <li>{@link #PROFILED_LBFGS}: the same projected L-BFGS over the hidden layers' parameters only, the output
 *       layer's weights and bias set at every evaluation to their exact minimiser (the extended loss is convex in
 *       them); runs to the same {@link StoppingRule}.</li>
 * </ul>
 */
public enum OptimiserKind {
  /** Bounded quasi-Newton method respecting the clip box. */
  PROJECTED_LBFGS,
  /** Adam for a fixed epoch count, for comparison. */
  ADAM,
  /**
   * Projected L-BFGS over the hidden layers with the output layer profiled out exactly at every evaluation (see
   * {@link ProfiledObjective}); for the extended loss with at least one hidden layer only.
   */
  PROFILED_LBFGS
}
