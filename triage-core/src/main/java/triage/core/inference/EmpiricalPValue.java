package triage.core.inference;

import org.apache.commons.statistics.distribution.BetaDistribution;

/**
 * Empirical (Monte Carlo) p-value of an observed test statistic from toy replicas of the statistic under the null.
 *
 * <p>Formula: {@code k = #{i : t_i >= t_obs}} (larger is more signal-like; ties count as exceedances), then
 * {@code p = (k + 1)/(N + 1)} ({@link PValueEstimator#PLUS_ONE}, the default) or {@code p = k/N}
 * ({@link PValueEstimator#RATIO}), and {@code Z = Phi^-1(1 - p)}. Uncertainty of the tail probability
 * {@code pi = P(T >= t_obs)}: binomial standard error {@code sqrt(p_hat (1 - p_hat) / N)} with
 * {@code p_hat = k/N}, and the Clopper–Pearson interval
 * {@code [B^-1(a/2; k, N-k+1), B^-1(1-a/2; k+1, N-k)]}, {@code a = 1 - confidence}, where {@code B^-1} is the
 * beta quantile.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>{@code k = 0}: the result is flagged {@link Bound#UPPER_BOUND}: p-value is the bound {@code 1/N} and Z the
 *       lower bound {@code Phi^-1(1 - 1/N)} ({@code "p < 1/N, Z > ..."}), for either estimator; the Clopper–Pearson lower
 *       end is 0;</li>
 *   <li>{@code k = N}: the Clopper–Pearson upper end is 1;</li>
 *   <li>an observed {@code +inf} has {@code k} equal to the number of {@code +inf} toys;</li>
 *   <li>no toys, a NaN toy or a NaN observation throws {@link InferenceArgumentException}.</li>
 * </ul>
 *
 * <p>Reference: "The use of confidence or fiducial limits illustrated in the case of the binomial",
 * Biometrika 26 (1934) 404, doi:10.1093/biomet/26.4.404; for the estimators see
 * {@link PValueEstimator}.
 *
 * <p>Accuracy: counting is exact; the interval ends use the beta quantile of commons-statistics-distribution
 * (about 1e-14 relative).
 */
public final class EmpiricalPValue {
  /** Default confidence of the Clopper–Pearson interval: the two-sided 1 sigma content. */
  public static final double DEFAULT_INTERVAL_CONFIDENCE = 0.6826894921370859;

  private final PValueEstimator estimator;
  private final double intervalConfidence;

  /** Whether a result is an estimate or a bound. */
  public enum Bound {
    /** The p-value is an estimate. */
    ESTIMATE,
    /** No toy exceeded: the true p-value is below {@code pValue} and Z is above {@code z}. */
    UPPER_BOUND
  }

  private EmpiricalPValue(PValueEstimator estimator, double intervalConfidence) {
    this.estimator = estimator;
    this.intervalConfidence = intervalConfidence;
  }

  /**
   * Result of an empirical p-value computation.
   *
   * @param exceedances k, number of toys with {@code t >= t_obs}
   * @param toys N, number of toys
   * @param pValue estimated p-value (or its upper bound 1/N when {@code bound == UPPER_BOUND})
   * @param z significance {@code Phi^-1(1 - pValue)} (a lower bound when {@code bound == UPPER_BOUND})
   * @param standardError binomial standard error {@code sqrt(k/N (1 - k/N) / N)}
   * @param lower Clopper–Pearson lower end for the tail probability
   * @param upper Clopper–Pearson upper end for the tail probability
   * @param bound whether the p-value is an estimate or a bound
   */
  public record Result(int exceedances, int toys, double pValue, double z, double standardError,
             double lower, double upper, Bound bound) {
    /** Checks p and the interval in [0, 1]. */
    public Result {
      Arguments.probability("p-value", pValue);
      Arguments.probability("interval lower end", lower);
      Arguments.probability("interval upper end", upper);
    }

    /**
     * @param alpha significance level in (0, 1)
     * @return true when {@code pValue <= alpha}
     */
    public boolean reject(double alpha) {
      return pValue <= Arguments.openProbability("alpha", alpha);
    }
  }

  /**
   * @return estimator {@link PValueEstimator#PLUS_ONE}, interval confidence 0.6827
   */
  public static EmpiricalPValue withDefaults() {
    return new EmpiricalPValue(PValueEstimator.PLUS_ONE, DEFAULT_INTERVAL_CONFIDENCE);
  }

  /**
   * @param v estimator
   * @return a copy with that estimator
   */
  public EmpiricalPValue with(PValueEstimator v) {
    return new EmpiricalPValue(Arguments.notNull("estimator", v), intervalConfidence);
  }

  /**
   * @param confidence confidence of the Clopper–Pearson interval in (0, 1)
   * @return a copy with that confidence
   */
  public EmpiricalPValue withIntervalConfidence(double confidence) {
    return new EmpiricalPValue(estimator, Arguments.openProbability("interval confidence", confidence));
  }

  /**
   * @param toys toy statistics
   * @param observed observed statistic
   * @return number of toys {@code >= observed}
   */
  public static int statistic(double[] toys, double observed) {
    Arguments.values("toys", toys, 1);
    Arguments.notNaN("observed statistic", observed);
    int k = 0;
    for (final double t : toys) {
      if (t >= observed) {
        k++;
      }
    }
    return k;
  }

  /**
   * @param toys toy statistics
   * @param observed observed statistic
   * @return p-value, Z, uncertainty and bound flag
   */
  public Result test(double[] toys, double observed) {
    return fromCounts(statistic(toys, observed), toys.length);
  }

  /**
   * @param k number of exceedances
   * @param n number of toys ({@code >= 1})
   * @return p-value, Z, uncertainty and bound flag
   */
  public Result fromCounts(int k, int n) {
    Arguments.atLeast("number of toys", n, 1);
    if (k < 0 || k > n) {
      throw Arguments.error("number of exceedances must be in [0, %d] but was %d", n, k);
    }
    final double ratio = (double) k / n;
    final double se = Math.sqrt(ratio * (1 - ratio) / n);
    final double a = 1 - intervalConfidence;
    final double lo = k == 0 ? 0 : BetaDistribution.of(k, n - k + 1.0).inverseCumulativeProbability(a / 2);
    final double hi = k == n ? 1 : BetaDistribution.of(k + 1.0, n - k).inverseSurvivalProbability(a / 2);
    if (k == 0) {
      final double bound = 1.0 / n;
      return new Result(0, n, bound, Significance.zFromP(bound), se, lo, hi, Bound.UPPER_BOUND);
    }
    final double p = estimator == PValueEstimator.PLUS_ONE ? (k + 1.0) / (n + 1.0) : ratio;
    return new Result(k, n, p, Significance.zFromP(p), se, lo, hi, Bound.ESTIMATE);
  }
}
