package triage.core.ratio;

/**
 * Callback after every optimiser iteration (and once for the initial point, iteration 0).
 * Called on the fitting thread; a slow listener slows the fit.
 */
@FunctionalInterface
public interface TrainingListener {
  /** A listener that does nothing. */
  TrainingListener NONE = (start, iteration, loss, pg, parameters) -> { };

  /**
   * @param start      index of the random start (0-based)
   * @param iteration  iteration or epoch number
   * @param loss       training loss at the current parameters
   * @param projectedGradientNorm projected-gradient infinity norm there
   * @param parameters a copy of the current parameters (the caller may keep it)
   */
  void onIteration(int start, int iteration, double loss, double projectedGradientNorm,
           double[] parameters);
}
