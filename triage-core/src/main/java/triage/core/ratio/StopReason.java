package triage.core.ratio;

/** Why an optimisation stopped. */
public enum StopReason {
  /** Both parts of the {@link StoppingRule} were met. */
  CONVERGED,
  /** The iteration cap of the {@link StoppingRule} was reached first. */
  MAX_ITERATIONS,
  /**
   * No decrease could be found along the projected steepest-descent arc either: the loss is at
   * its floating-point floor. Reported as converged only if the projected-gradient test holds.
   */
  LINE_SEARCH_FAILED,
  /** Adam ran its fixed number of epochs. */
  EPOCHS_COMPLETED
}
