package triage.core.ratio;

/** Internal per-iteration callback of the optimisers (parameters array is live, do not keep). */
@FunctionalInterface
interface IterationHook {
  /** No-op hook. */
  IterationHook NONE = (iteration, loss, pg, x) -> { };

  /** Called after iteration {@code iteration} (0 = the starting point). */
  void after(int iteration, double loss, double projectedGradientNorm, double[] x);
}
