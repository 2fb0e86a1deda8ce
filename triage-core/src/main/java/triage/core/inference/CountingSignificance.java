package triage.core.inference;

import org.apache.commons.numbers.gamma.RegularizedBeta;
import org.apache.commons.numbers.gamma.RegularizedGamma;

/**
 * Significances of a single-bin counting experiment (cut-and-count signal region).
 *
 * <p>Formulas:
 * <ul>
 *   <li>observed likelihood-ratio significance for known background b and observed count n:
 *       {@code Z = sign(n - b) sqrt(2 [n ln(n/b) - (n - b)])};</li>
 *   <li>Asimov median discovery significance for known b: {@code Z_A = sqrt(2 [(s+b) ln(1 + s/b) - s])};</li>
 *   <li>Asimov median discovery significance with background uncertainty {@code sigma_b}:
 *       {@code Z_A = sqrt(2 [(s+b) ln((s+b)(b+sigma_b^2) / (b^2 + (s+b) sigma_b^2))
 *       - (b^2/sigma_b^2) ln(1 + sigma_b^2 s / (b (b + sigma_b^2)))])};</li>
 *   <li>Z_Bi for the on/off problem {@code n_on ~ Pois(s + b)}, {@code n_off ~ Pois(tau b)}:
 *       {@code p_Bi = I_{1/(1+tau)}(n_on, n_off + 1)}, {@code Z_Bi = Phi^-1(1 - p_Bi)}; for {@code b +- sigma_b}
 *       one sets {@code tau = b / sigma_b^2}, {@code n_off = tau b} (non-integer arguments are allowed);</li>
 *   <li>the Li–Ma profile-likelihood significance of an on/off measurement (eq. (17) of the on/off paper below) with
 *       {@code alpha = 1/tau}:
 *       {@code S = sign(N_on - alpha N_off) sqrt(2) {N_on ln[(1+alpha)/alpha N_on/(N_on+N_off)]
 *       + N_off ln[(1+alpha) N_off/(N_on+N_off)]}^(1/2)}.</li>
 * </ul>
 *
 * <p>Edge cases:
 * <ul>
 *   <li>{@code n = 0}: the likelihood-ratio Z is {@code -sqrt(2b)}; {@code n = b} gives exactly 0;</li>
 *   <li>{@code s = 0} gives {@code Z_A = 0};</li>
 *   <li>{@code sigma_b = 0}, or {@code sigma_b} so small that its effect is below double resolution
 *       ({@code (s+b) sigma_b^2 / b^2 < 2^-53}), uses the known-b formula;</li>
 *   <li>{@code n_on = 0} gives {@code p_Bi = 1} and {@code Z_Bi = -inf};</li>
 *   <li>Z_Bi with {@code sigma_b = 0} is the Poisson limit {@code p = P(N >= n | b) = P(n, b)} (regularized
 *       lower incomplete gamma; for integer n the Poisson upper tail);</li>
 *   <li>negative counts, {@code b <= 0}, negative or non-finite arguments throw
 *       {@link InferenceArgumentException}.</li>
 * </ul>
 *
 * <p>References: "Asymptotic formulae for likelihood-based tests of new physics", Eur. Phys. J. C 71 (2011) 1554,
 * doi:10.1140/epjc/s10052-011-1554-0, Sec. 5 (known-b Asimov formula; eq. (97), number from memory); the
 * sigma_b formula is a corollary of the asymptotic-formulae paper (2012 note "Discovery sensitivity for a counting
 * experiment with background uncertainty"); "Evaluation of three methods for calculating statistical significance
 * when incorporating a systematic uncertainty into a test of the background-only hypothesis for a Poisson
 * process", Nucl. Instrum. Meth. A 595 (2008) 480, doi:10.1016/j.nima.2008.07.086, arXiv:physics/0702156 (Z_Bi);
 * the on/off paper "Analysis methods for results in gamma-ray astronomy", Astrophys. J. 272 (1983) 317,
 * doi:10.1086/161295, eq. (17).
 *
 * <p>Far tail: where the p-value of Z_Bi (or of its Poisson limit) is below 1e-290, Z comes from ln p computed
 * in logarithms ({@link LogTail}), so strong excesses keep finite, ordered significances (tested to Z = 90 against
 * mpmath); the reported p-value itself may then be 0. For a deficit (p above 1/2) Z is −Φ⁻¹(1 − q) from the
 * complement q = 1 − p (regularised incomplete beta or gamma complement), so it stays finite where p rounds to 1
 * (tested to Z = −24 against SciPy).
 *
 * <p>Accuracy: the function {@code h(x) = (1+x) ln(1+x) - x} common to the first two formulas is evaluated by
 * its power series {@code sum_{k>=2} (-1)^k x^k / (k(k-1))} for {@code |x| < 0.1}, so Z keeps full relative
 * precision when {@code n ~ b} or {@code s << b}. The sigma_b formula is rewritten without cancellation as
 * σ_b → 0: the first logarithm is {@code log1p(s b / (b^2 + (s+b) sigma_b^2))} and the second term is
 * {@code s b/(b + sigma_b^2) * log1p(u)/u} with {@code u = sigma_b^2 s / (b (b + sigma_b^2))}, which tends to
 * {@code s} (a naive implementation returns 2.782 instead of 2.7795 at (10, 10, 1e-6)). The remaining
 * difference of two terms loses about {@code log10((b + sigma_b^2)/s)} digits when {@code s << b}. Z_Bi uses the
 * regularized incomplete beta of commons-numbers-gamma (about 1e-14 relative) and the tail inverse normal.
 */
public final class CountingSignificance {
  /** Below this p-value, Z is computed from ln p (see {@link LogTail}). */
  static final double UNDERFLOW = 1e-290;

  /** Below this |x| the power series of h(x) is used. */
  private static final double SERIES_LIMIT = 0.1;
  /** 2^-53: relative effect of sigma_b below which the known-b formula is exact in double precision. */
  private static final double SIGMA_SWITCH = 0x1.0p-53;

  private CountingSignificance() {
  }

  /**
   * Result of a Z_Bi evaluation.
   *
   * @param pValue one-sided p-value {@code p_Bi}
   * @param z {@code Z_Bi = Phi^-1(1 - p_Bi)}
   * @param nOn on-region count used
   * @param nOff off-region (sideband) count used
   * @param tau off/on ratio of background expectations used ({@code +inf} for a known background)
   */
  public record ZBiResult(double pValue, double z, double nOn, double nOff, double tau) {
    /** Checks p in [0, 1]. */
    public ZBiResult {
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
   * Observed-data likelihood-ratio significance with known background.
   *
   * @param n observed count ({@code >= 0}, non-integer allowed, e.g. an Asimov count)
   * @param b expected background ({@code > 0})
   * @return {@code sign(n - b) sqrt(2 [n ln(n/b) - (n - b)])}
   */
  public static double likelihoodRatioZ(double n, double b) {
    Arguments.nonNegative("observed count n", n);
    Arguments.positive("background b", b);
    final double d = n - b;
    final double x = d / b;
    final double q;
    if (Math.abs(x) < SERIES_LIMIT) {
      q = b * hSeries(x);
    } else if (n == 0) {
      q = b;
    } else {
      final double ratio = n / b;
      final double log = Double.isFinite(ratio) && ratio > 0 ? Math.log(ratio) : Math.log(n) - Math.log(b);
      q = n * log - d;
    }
    return Math.copySign(Math.sqrt(2 * Math.max(q, 0)), d);
  }

  /**
   * Asimov median discovery significance with known background.
   *
   * @param s expected signal ({@code >= 0})
   * @param b expected background ({@code > 0})
   * @return {@code sqrt(2 [(s+b) ln(1 + s/b) - s])}
   */
  public static double asimovZ(double s, double b) {
    Arguments.nonNegative("signal s", s);
    Arguments.positive("background b", b);
    return Math.sqrt(2 * Math.max(asimovHalfQ(s, b), 0));
  }

  /** {@code (s+b) ln(1+s/b) - s = b h(s/b)}. */
  private static double asimovHalfQ(double s, double b) {
    final double x = s / b;
    if (x < SERIES_LIMIT) {
      return b * hSeries(x);
    }
    return (s + b) * Math.log1p(x) - s;
  }

  /**
   * Asimov median discovery significance with a background known to {@code +- sigmaB}.
   *
   * @param s expected signal ({@code >= 0})
   * @param b expected background ({@code > 0})
   * @param sigmaB absolute background uncertainty ({@code >= 0})
   * @return the median discovery significance of the sigma_b extension of the Asimov formula (see class
   *     documentation)
   */
  public static double asimovZ(double s, double b, double sigmaB) {
    Arguments.nonNegative("signal s", s);
    Arguments.positive("background b", b);
    Arguments.nonNegative("background uncertainty sigma_b", sigmaB);
    final double v = sigmaB * sigmaB;
    if ((s + b) * v / (b * b) < SIGMA_SWITCH) {
      return Math.sqrt(2 * Math.max(asimovHalfQ(s, b), 0));
    }
    final double t1 = (s + b) * Math.log1p(s * b / (b * b + (s + b) * v));
    final double u = v * s / (b * (b + v));
    final double log1pOverU = u == 0 ? 1 : Math.log1p(u) / u;
    final double t2 = s * b / (b + v) * log1pOverU;
    return Math.sqrt(2 * Math.max(t1 - t2, 0));
  }

  /**
   * Z_Bi of the on/off problem.
   *
   * @param nOn on-region count ({@code >= 0}, non-integer allowed)
   * @param nOff off-region count ({@code >= 0}, non-integer allowed)
   * @param tau ratio of off- to on-region background expectations ({@code > 0})
   * @return p_Bi and Z_Bi
   */
  public static ZBiResult zBi(double nOn, double nOff, double tau) {
    Arguments.nonNegative("on count n_on", nOn);
    Arguments.nonNegative("off count n_off", nOff);
    Arguments.positive("tau", tau);
    final double p;
    if (nOn == 0) {
      p = 1;
    } else {
      // x = 1/(1+tau) computed without rounding 1+tau when tau is tiny
      final double x = 1 / (1 + tau);
      p = Math.min(1, Math.max(0, RegularizedBeta.value(x, nOn, nOff + 1)));
      if (p < UNDERFLOW && x < (nOn + 1) / (nOn + nOff + 3)) {
        // p (nearly) underflows: Z from ln p, so that strong excesses keep finite, ordered significances
        return new ZBiResult(p, LogTail.zFromLogP(LogTail.logRegularizedBeta(x, nOn, nOff + 1)), nOn, nOff, tau);
      }
      if (p > 0.5) {
        // a deficit: Z = −Φ⁻¹(1 − q) from the complement q = 1 − p, which keeps its digits where p rounds to 1
        final double q = Math.min(1, Math.max(0, RegularizedBeta.complement(x, nOn, nOff + 1)));
        return new ZBiResult(p, -Significance.zFromP(q), nOn, nOff, tau);
      }
    }
    return new ZBiResult(p, Significance.zFromP(p), nOn, nOff, tau);
  }

  /**
   * Z_Bi of {@link #zBiFromBackground}, or NaN where it is not defined: no positive expected background, or no
   * background uncertainty to carry (as for a yield summed from no reference event).
   */
  public static double zBiOrNaN(double n, double b, double sigmaB) {
    return b > 0 && sigmaB > 0 ? zBiFromBackground(n, b, sigmaB).z() : Double.NaN;
  }

  /**
   * Z_Bi for an observed (or expected) count with background {@code b +- sigmaB}, mapped to the on/off problem
   * with {@code tau = b / sigmaB^2}, {@code n_off = tau b}.
   *
   * @param n observed on-region count ({@code >= 0}, non-integer allowed)
   * @param b expected background ({@code > 0})
   * @param sigmaB absolute background uncertainty ({@code >= 0}; 0 gives the Poisson limit)
   * @return p_Bi and Z_Bi
   */
  public static ZBiResult zBiFromBackground(double n, double b, double sigmaB) {
    Arguments.nonNegative("observed count n", n);
    Arguments.positive("background b", b);
    Arguments.nonNegative("background uncertainty sigma_b", sigmaB);
    final double tau = b / (sigmaB * sigmaB);
    if (sigmaB == 0 || !Double.isFinite(tau)) {
      // Poisson limit: P(N >= n | b) = P(n, b) (regularized lower incomplete gamma)
      final double p = n == 0 ? 1 : RegularizedGamma.P.value(n, b);
      // a deficit (p > 1/2) from the complement Q(n, b), which keeps its digits where p rounds to 1
      final double z = p < UNDERFLOW && b < n + 1 ? LogTail.zFromLogP(LogTail.logLowerGamma(n, b))
          : p > 0.5 && n > 0 ? -Significance.zFromP(RegularizedGamma.Q.value(n, b))
          : Significance.zFromP(p);
      return new ZBiResult(p, z, n, Double.POSITIVE_INFINITY, Double.POSITIVE_INFINITY);
    }
    return zBi(n, tau * b, tau);
  }

  /**
   * Li–Ma significance of an on/off measurement (Astrophys. J. 272 (1983) 317, eq. (17)).
   *
   * @param nOn on-region count ({@code >= 0})
   * @param nOff off-region count ({@code >= 0})
   * @param alpha on/off exposure ratio {@code t_on / t_off = 1/tau} ({@code > 0})
   * @return signed significance S (sign of {@code nOn - alpha nOff})
   */
  public static double liMaZ(double nOn, double nOff, double alpha) {
    Arguments.nonNegative("on count N_on", nOn);
    Arguments.nonNegative("off count N_off", nOff);
    Arguments.positive("alpha", alpha);
    final double total = nOn + nOff;
    if (total == 0) {
      return 0;
    }
    final double t1 = nOn == 0 ? 0 : nOn * Math.log((1 + alpha) / alpha * (nOn / total));
    final double t2 = nOff == 0 ? 0 : nOff * Math.log((1 + alpha) * (nOff / total));
    return Math.copySign(Math.sqrt(2 * Math.max(t1 + t2, 0)), nOn - alpha * nOff);
  }

  /**
   * {@code h(x) = (1+x) ln(1+x) - x} for {@code x >= -1}, by power series when {@code |x| < 0.1}.
   */
  static double hSeries(double x) {
    if (Math.abs(x) >= SERIES_LIMIT) {
      return x == -1 ? 1 : (1 + x) * Math.log1p(x) - x;
    }
    // sum_{k>=2} (-1)^k x^k / (k (k-1)); terms decrease at least by a factor 10
    double power = x * x;
    double sum = 0;
    for (int k = 2; k < 40; k++) {
      final double term = power / (k * (double) (k - 1));
      sum += term;
      if (Math.abs(term) <= 1e-17 * Math.abs(sum)) {
        break;
      }
      power *= -x;
    }
    return sum;
  }
}
