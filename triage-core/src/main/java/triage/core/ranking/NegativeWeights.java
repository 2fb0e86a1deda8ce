package triage.core.ranking;

/**
 * Treatment of negative event weights, which some simulations produce.
 */
public enum NegativeWeights {
  /** A negative weight throws {@link RankingArgumentException} (the default). */
  REJECT,
  /**
   * Negative weights enter every formula as signed weights; the total weight of each sample must still be
   * {@code > 0}. Weighted ECDFs may then be non-monotone: distances are still defined by the formulas, but the
   * asymptotic p-values (which use effective sample sizes) have no theoretical justification, and binned
   * methods throw if a bin ends with negative content.
   */
  ALLOW
}
