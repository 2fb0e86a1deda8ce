package triage.core.inference;

import java.util.Arrays;
import java.util.function.DoubleUnaryOperator;

/**
 * One-sample Kolmogorov–Smirnov test of a sample against a fully specified continuous distribution.
 *
 * <p>Formula: for sorted {@code x_(1) <= ... <= x_(n)} and CDF F,
 * {@code D = max_i max(i/n - F(x_(i)), F(x_(i)) - (i-1)/n)}; p-value {@code P(D_n >= D)}.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>a CDF value outside {@code [0, 1]} or NaN throws {@link InferenceArgumentException};</li>
 *   <li>an empty sample or a NaN value throws;</li>
 *   <li>when F has parameters estimated from the same sample (e.g. {@link ChiSquaredFit}) the p-value is
 *       conservative (too large), the Lilliefors effect.</li>
 * </ul>
 *
 * <p>Algorithm: sort a copy, one pass. P-value by {@link PValueMethod}: exact Marsaglia–Tsang–Wang
 * ({@link KolmogorovDistribution#oneSampleSurvival}); asymptotic {@code Q_KS(sqrt(n) D)}; or, for
 * {@link PValueMethod#AUTO}, exact for {@code n <= 1000} and otherwise the asymptotic form with the Stephens
 * correction {@code Q_KS((sqrt(n) + 0.12 + 0.11/sqrt(n)) D)} ("Use of the Kolmogorov–Smirnov, Cramér–von Mises
 * and related statistics without extensive tables", J. R. Stat. Soc. B 32 (1970) 115,
 * doi:10.1111/j.2517-6161.1970.tb00821.x). Reference: "Sulla determinazione empirica di una legge di
 * distribuzione", Giorn. Ist. Ital. Attuari 4 (1933) 83.
 *
 * <p>Accuracy: D is exact up to the accuracy of F; for the p-value see {@link KolmogorovDistribution}. The
 * Stephens form is accurate to about 5e-3 relative for {@code n >= 1500} and p in [0.01, 0.9] (tested against
 * the exact distribution).
 */
public final class OneSampleKolmogorovSmirnovTest {
  private static final int AUTO_EXACT_LIMIT = 1000;

  /** How the p-value is computed. */
  public enum PValueMethod {
    /** Exact for n at most 1000, otherwise asymptotic with the Stephens correction. */
    AUTO,
    /** Exact distribution of D_n (Marsaglia–Tsang–Wang). */
    EXACT,
    /** Asymptotic Kolmogorov distribution {@code Q_KS(sqrt(n) D)} without correction. */
    ASYMPTOTIC,
    /** Asymptotic with the Stephens correction {@code Q_KS((sqrt(n) + 0.12 + 0.11/sqrt(n)) D)}. */
    STEPHENS
  }

  private final PValueMethod method;

  private OneSampleKolmogorovSmirnovTest(PValueMethod method) {
    this.method = method;
  }

  /**
   * Result of the test.
   *
   * @param statistic D
   * @param pValue p-value
   * @param n sample size
   * @param method p-value method used ({@link PValueMethod#AUTO} is resolved to the method applied)
   */
  public record Result(double statistic, double pValue, int n, PValueMethod method) {
    /** Checks p in [0, 1]. */
    public Result {
      Arguments.probability("p-value", pValue);
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
   * @return a test using {@link PValueMethod#AUTO}
   */
  public static OneSampleKolmogorovSmirnovTest withDefaults() {
    return new OneSampleKolmogorovSmirnovTest(PValueMethod.AUTO);
  }

  /**
   * @param v p-value method
   * @return a copy using it
   */
  public OneSampleKolmogorovSmirnovTest with(PValueMethod v) {
    return new OneSampleKolmogorovSmirnovTest(Arguments.notNull("p-value method", v));
  }

  /**
   * @param x sample
   * @param cdf continuous cumulative distribution function
   * @return D
   */
  public double statistic(double[] x, DoubleUnaryOperator cdf) {
    Arguments.values("sample", x, 1);
    Arguments.notNull("cdf", cdf);
    final double[] sorted = x.clone();
    Arrays.sort(sorted);
    final int n = sorted.length;
    double d = 0;
    for (int i = 0; i < n; i++) {
      final double f = cdf.applyAsDouble(sorted[i]);
      Arguments.probability("cdf value", f);
      d = Math.max(d, Math.max((i + 1.0) / n - f, f - (double) i / n));
    }
    return d;
  }

  /**
   * @param x sample
   * @param cdf continuous cumulative distribution function
   * @return D and its p-value
   */
  public Result test(double[] x, DoubleUnaryOperator cdf) {
    final double d = statistic(x, cdf);
    final int n = x.length;
    final double sqrtN = Math.sqrt(n);
    return switch (method) {
      case EXACT -> new Result(d, KolmogorovDistribution.oneSampleSurvival(d, n), n, PValueMethod.EXACT);
      case ASYMPTOTIC -> new Result(d, KolmogorovDistribution.survival(sqrtN * d), n,
        PValueMethod.ASYMPTOTIC);
      case STEPHENS -> stephens(d, n);
      case AUTO -> n <= AUTO_EXACT_LIMIT
        ? new Result(d, KolmogorovDistribution.oneSampleSurvival(d, n), n, PValueMethod.EXACT)
        : stephens(d, n);
    };
  }

  private static Result stephens(double d, int n) {
    final double sqrtN = Math.sqrt(n);
    return new Result(d, KolmogorovDistribution.survival((sqrtN + 0.12 + 0.11 / sqrtN) * d), n,
      PValueMethod.STEPHENS);
  }
}
