package triage.core.sample;

/** Which reference weights are accepted. */
public enum WeightPolicy {
  /** Only positive weights; a zero or negative weight makes the row bad. */
  POSITIVE,
  /** Any finite weight: negative and zero weights (legitimate in some simulations) are accepted and counted. */
  ANY_FINITE
}
