package triage.core.inference;

import triage.core.stats.NeumaierSum;

import org.apache.commons.numbers.gamma.Digamma;
import org.apache.commons.numbers.gamma.LogGamma;
import org.apache.commons.numbers.gamma.Trigamma;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;

/**
 * Maximum-likelihood fit of the degrees of freedom of a chi-squared distribution to toy test statistics, with its
 * standard error and a Kolmogorov–Smirnov goodness of fit.
 *
 * <p>Formula: for {@code t_1..t_N > 0} the log-likelihood of {@code chi2_nu} is
 * {@code l(nu) = sum[(nu/2 - 1) ln t_i - t_i/2] - N[(nu/2) ln 2 + ln Gamma(nu/2)]}; the score equation
 * {@code dl/dnu = (1/2) sum ln t_i - (N/2)[ln 2 + psi(nu/2)] = 0} gives
 * {@code psi(nu_hat/2) = mean(ln(t_i/2))}, which has a unique root because the digamma function psi increases
 * strictly from {@code -inf} to {@code +inf} on {@code (0, inf)} (and {@code l} is strictly concave). The Fisher
 * information is {@code I(nu) = -d2l/dnu2 = (N/4) psi'(nu/2)}, so {@code se(nu_hat) = 2 / sqrt(N psi'(nu_hat/2))}.
 * Goodness of fit: one-sample KS of the toys against {@code chi2_nu_hat}.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>toys must be finite and {@code > 0}: a zero (e.g. the point mass of a one-sided {@code q0}) makes the
 *       likelihood unbounded as {@code nu -> 0} and throws {@link InferenceArgumentException}; fit the positive
 *       part and account for the point mass separately;</li>
 *   <li>a single toy is allowed (the fit is then exact for the mean log);</li>
 *   <li>the KS p-value is conservative because nu is estimated from the same toys (Lilliefors effect).</li>
 * </ul>
 *
 * <p>Algorithm: Newton iteration on {@code x = nu/2} for {@code psi(x) = c} from the starting point
 * {@code x0 = exp(c) + 1/2} ({@code c >= -2.22}) or {@code x0 = -1/(c - psi(1))} of "Estimating a Dirichlet
 * distribution" (technical note, 2000, Appendix C), which converges in a few steps; digamma and trigamma from
 * commons-numbers-gamma; the mean of logs with {@link NeumaierSum}. References: "On the mathematical foundations
 * of theoretical statistics", Phil. Trans. R. Soc. Lond. A 222 (1922) 309, doi:10.1098/rsta.1922.0009, for
 * maximum likelihood; the gamma-shape score equation with known scale, e.g. Continuous Univariate
 * Distributions, vol. 1, 2nd ed. (1994), ch. 17.
 *
 * <p>Accuracy: Newton is iterated to a relative change below 1e-14 of {@code x}; the fitted nu is accurate to
 * about 1e-13 relative given the data.
 */
public final class ChiSquaredFit {
  private static final double LN2 = Math.log(2);
  private static final double PSI_ONE = -0.5772156649015329;

  private final OneSampleKolmogorovSmirnovTest ks;

  private ChiSquaredFit(OneSampleKolmogorovSmirnovTest ks) {
    this.ks = ks;
  }

  /**
   * Fitted chi-squared distribution.
   *
   * @param dof maximum-likelihood degrees of freedom nu_hat
   * @param standardError standard error of nu_hat from the Fisher information
   * @param toys number of toys
   * @param logLikelihood log-likelihood at nu_hat
   * @param ksStatistic Kolmogorov–Smirnov D of the toys against chi2_nu_hat
   * @param ksPValue its p-value (conservative, see class documentation)
   */
  public record Result(double dof, double standardError, int toys, double logLikelihood, double ksStatistic,
             double ksPValue) {
    /** Checks p in [0, 1] and a positive dof. */
    public Result {
      Arguments.positive("degrees of freedom", dof);
      Arguments.probability("KS p-value", ksPValue);
    }

    /**
     * @param t observed statistic
     * @return asymptotic p-value {@code P(chi2_nu_hat >= t)}
     */
    public double pValue(double t) {
      return ChiSquaredTail.pValue(t, dof);
    }

    /**
     * @param t observed statistic
     * @return significance of {@link #pValue(double)}
     */
    public double z(double t) {
      return ChiSquaredTail.z(t, dof);
    }

    /**
     * @param alpha significance level in (0, 1)
     * @return true when the KS goodness of fit rejects the fitted chi-squared at that level
     */
    public boolean rejectFit(double alpha) {
      return ksPValue <= Arguments.openProbability("alpha", alpha);
    }
  }

  /**
   * @return a fitter whose KS p-value uses {@link OneSampleKolmogorovSmirnovTest.PValueMethod#AUTO}
   */
  public static ChiSquaredFit withDefaults() {
    return new ChiSquaredFit(OneSampleKolmogorovSmirnovTest.withDefaults());
  }

  /**
   * @param v KS p-value method
   * @return a copy using it
   */
  public ChiSquaredFit with(OneSampleKolmogorovSmirnovTest.PValueMethod v) {
    return new ChiSquaredFit(ks.with(v));
  }

  /**
   * @param toys toy statistics (finite, {@code > 0})
   * @return nu_hat only
   */
  public static double statistic(double[] toys) {
    Arguments.positiveValues("toys", toys, 1);
    return 2 * inverseDigamma(meanLogHalf(toys));
  }

  /**
   * @param toys toy statistics (finite, {@code > 0})
   * @return fitted dof, standard error and goodness of fit
   */
  public Result fit(double[] toys) {
    Arguments.positiveValues("toys", toys, 1);
    final double c = meanLogHalf(toys);
    final double x = inverseDigamma(c);
    final double nu = 2 * x;
    final int n = toys.length;
    final double se = 2 / Math.sqrt(n * Trigamma.value(x));
    final NeumaierSum sumLog = NeumaierSum.create();
    final NeumaierSum sumT = NeumaierSum.create();
    for (final double t : toys) {
      sumLog.add(Math.log(t));
      sumT.add(t);
    }
    final double ll = (x - 1) * sumLog.value() - 0.5 * sumT.value() - n * (x * LN2 + LogGamma.value(x));
    final ChiSquaredDistribution chi2 = ChiSquaredDistribution.of(nu);
    final OneSampleKolmogorovSmirnovTest.Result gof = ks.test(toys, chi2::cumulativeProbability);
    return new Result(nu, se, n, ll, gof.statistic(), gof.pValue());
  }

  private static double meanLogHalf(double[] toys) {
    final NeumaierSum s = NeumaierSum.create();
    for (final double t : toys) {
      s.add(Math.log(t));
    }
    return s.value() / toys.length - LN2;
  }

  /**
   * Solves {@code psi(x) = c} for {@code x > 0}.
   *
   * @param c target value (finite)
   * @return the unique root
   */
  static double inverseDigamma(double c) {
    Arguments.finite("mean log", c);
    double x = c >= -2.22 ? Math.exp(c) + 0.5 : -1 / (c - PSI_ONE);
    for (int i = 0; i < 100; i++) {
      final double step = (Digamma.value(x) - c) / Trigamma.value(x);
      double next = x - step;
      if (!(next > 0)) {
        next = 0.5 * x;
      }
      final boolean done = Math.abs(next - x) <= 1e-14 * next;
      x = next;
      if (done) {
        break;
      }
    }
    return x;
  }
}
