package triage.core.inference;

import org.apache.commons.statistics.distribution.ChiSquaredDistribution;

/**
 * Classical (Neyman, central one-sided) confidence limits on the mean of a Poisson count with no background.
 *
 * <p>Formula: upper limit {@code mu_up = F^-1_chi2(CL; 2(n+1)) / 2}; lower limit
 * {@code mu_lo = F^-1_chi2(1 - CL; 2n) / 2}, where {@code F^-1_chi2(p; k)} is the chi-squared quantile.
 * Equivalently {@code P(N <= n | mu_up) = 1 - CL} and {@code P(N >= n | mu_lo) = 1 - CL}.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>{@code n = 0}: the lower limit is 0 and the upper limit is {@code -ln(1 - CL)};</li>
 *   <li>{@code n < 0} or CL outside {@code (0, 1)} throws {@link InferenceArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: the chi-squared/Poisson duality ("Fiducial limits for the Poisson distribution", Biometrika 28
 * (1936) 437); reference: Review of Particle Physics, "Statistics" review, Poisson-limit table (table number from
 * memory); quantiles from
 * commons-statistics-distribution {@link ChiSquaredDistribution}.
 *
 * <p>Accuracy: that of the chi-squared quantile, about 1e-14 relative.
 */
public final class PoissonLimits {
  private PoissonLimits() {
  }

  /**
   * @param n observed count
   * @param confidenceLevel CL in (0, 1), e.g. 0.95
   * @return classical upper limit on the Poisson mean
   */
  public static double upper(int n, double confidenceLevel) {
    Arguments.nonNegative("observed count n", n);
    Arguments.openProbability("confidence level", confidenceLevel);
    if (n == 0) {
      return -Math.log1p(-confidenceLevel);
    }
    return 0.5 * ChiSquaredDistribution.of(2.0 * (n + 1)).inverseCumulativeProbability(confidenceLevel);
  }

  /**
   * @param n observed count
   * @param confidenceLevel CL in (0, 1), e.g. 0.95
   * @return classical lower limit on the Poisson mean (0 for {@code n = 0})
   */
  public static double lower(int n, double confidenceLevel) {
    Arguments.nonNegative("observed count n", n);
    Arguments.openProbability("confidence level", confidenceLevel);
    if (n == 0) {
      return 0;
    }
    return 0.5 * ChiSquaredDistribution.of(2.0 * n).inverseSurvivalProbability(confidenceLevel);
  }
}
