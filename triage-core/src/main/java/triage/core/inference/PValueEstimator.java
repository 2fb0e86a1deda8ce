package triage.core.inference;

/**
 * Estimator of a p-value from {@code k} exceedances among {@code N} Monte Carlo (toy) or permutation replicas.
 */
public enum PValueEstimator {
  /**
   * {@code (k + 1) / (N + 1)}: counts the observation as one of the replicas. It is a valid p-value
   * ({@code P(p <= alpha) <= alpha} under the null, with equality at the attainable levels for a continuous
   * statistic) and never 0. Reference: "Permutation p-values should never be zero",
   * Stat. Appl. Genet. Mol. Biol. 9 (2010) 39, doi:10.2202/1544-6115.1585; Bootstrap Methods and their
   * Application (1997), eq. (4.11).
   */
  PLUS_ONE,
  /**
   * {@code k / N}: the unbiased estimate of the tail probability of the toy distribution; it is 0 when no replica
   * exceeds, and is not a valid p-value for small N.
   */
  RATIO
}
