package triage.core.ratio;

/** A smooth objective the optimisers minimise. */
interface DifferentiableFunction {
  /** Number of variables. */
  int dimension();

  /** Value at x; writes the gradient into {@code gradient} (length {@link #dimension()}). */
  double valueAndGradient(double[] x, double[] gradient);
}
