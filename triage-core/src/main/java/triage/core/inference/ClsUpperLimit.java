package triage.core.inference;

import triage.core.stats.NeumaierSum;

import org.apache.commons.numbers.gamma.RegularizedGamma;
import org.apache.commons.numbers.rootfinder.BrentSolver;
import org.apache.commons.statistics.distribution.NormalDistribution;

/**
 * CLs upper limit on the signal count of a single-bin Poisson counting experiment.
 *
 * <p>Formula: {@code CLs(s) = CL_{s+b} / CL_b} with {@code CL_{s+b} = P(N <= n_obs | s + b)} and
 * {@code CL_b = P(N <= n_obs | b)}; the upper limit {@code s_up} at confidence level CL solves
 * {@code CLs(s_up) = 1 - CL}. With a Gaussian background uncertainty {@code sigma_b} both probabilities are
 * averaged over the background prior {@code pi(b') ~ N(b, sigma_b)} truncated to {@code b' >= 0} and renormalised
 * (prior-predictive "hybrid" treatment): {@code CL_x = int P(N <= n_obs | x') pi(b') db'}.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>{@code n_obs = 0}: {@code CLs = exp(-s)} for any b, so {@code s_up = -ln(1 - CL)} (2.9957 at 95%);</li>
 *   <li>{@code b = 0}: the classical Poisson upper limit {@link PoissonLimits#upper(int, double)};</li>
 *   <li>{@code sigma_b = 0} is the known-b limit;</li>
 *   <li>the limit is always {@code > 0} (CLs never excludes s = 0);</li>
 *   <li>negative counts, negative b or sigma_b, CL outside (0, 1) throw {@link InferenceArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: Poisson cumulative probabilities as regularized upper incomplete gamma
 * {@code P(N <= n | mu) = Q(n + 1, mu)}; when {@code CL_b} underflows (very large b), the ratio is formed from
 * scaled term sums in log space. The Gaussian average uses composite Simpson integration over
 * {@code [max(0, b - 8 sigma_b), b + 8 sigma_b]} with 2048 intervals, split at {@code n + 20 + 10 √(n+1)} into two
 * panels of 2048 intervals each when the range extends past it (σ_b large against n). The root is found with the Brent solver of
 * commons-numbers-rootfinder, bracketed by [0, classical upper limit], since the CLs limit never exceeds it.
 * Reference: "Presentation of search results: the CLs technique", J. Phys. G 28 (2002) 2693,
 * doi:10.1088/0954-3899/28/10/313; the marginalisation follows "Incorporating systematic uncertainties into an
 * upper limit", Nucl. Instrum. Meth. A 320 (1992) 331, doi:10.1016/0168-9002(92)90794-5.
 *
 * <p>Accuracy: the root is solved to an absolute tolerance of 1e-10 in s. The limits agree with adaptive
 * quadrature (SciPy) to 1e-7 relative, tested for σ_b from 0.3 to 200 (with a single panel, before the split, σ_b
 * = 100 and 200 against b = 1 were off by 5e-6 and 1.4e-4); for {@code sigma_b / b < 1e-6} the known-b formula is
 * used.
 */
public final class ClsUpperLimit {
  private static final double DEFAULT_CL = 0.95;
  private static final int SIMPSON_INTERVALS = 2048;
  private static final double RANGE_SIGMAS = 8;
  private static final double RELATIVE_SIGMA_KNOWN = 1e-6;

  private final double confidenceLevel;

  private ClsUpperLimit(double confidenceLevel) {
    this.confidenceLevel = confidenceLevel;
  }

  /**
   * Result of a CLs upper-limit computation.
   *
   * @param upperLimit upper limit on the signal count s
   * @param confidenceLevel confidence level CL
   * @param observed observed count n_obs
   * @param background expected background b
   * @param backgroundUncertainty Gaussian uncertainty sigma_b (0 for known b)
   * @param clsAtLimit CLs evaluated at the limit (equal to 1 - CL within the solver tolerance)
   */
  public record Result(double upperLimit, double confidenceLevel, int observed, double background,
             double backgroundUncertainty, double clsAtLimit) {
    /** Checks CLs in [0, 1]. */
    public Result {
      Arguments.probability("CLs at the limit", clsAtLimit);
      Arguments.openProbability("confidence level", confidenceLevel);
    }

    /**
     * @param s signal count
     * @return true when s is excluded, i.e. {@code s > upperLimit}
     */
    public boolean excludes(double s) {
      return Arguments.notNaN("signal s", s) > upperLimit;
    }
  }

  /**
   * @return a calculator with CL = 0.95
   */
  public static ClsUpperLimit withDefaults() {
    return new ClsUpperLimit(DEFAULT_CL);
  }

  /**
   * @param cl confidence level in (0, 1)
   * @return a copy with that confidence level
   */
  public ClsUpperLimit withConfidenceLevel(double cl) {
    return new ClsUpperLimit(Arguments.openProbability("confidence level", cl));
  }

  /**
   * @return the confidence level
   */
  public double confidenceLevel() {
    return confidenceLevel;
  }

  /**
   * @param s signal count ({@code >= 0})
   * @param observed observed count
   * @param b known background ({@code >= 0})
   * @return {@code CLs = P(N <= n_obs | s + b) / P(N <= n_obs | b)}
   */
  public static double cls(double s, int observed, double b) {
    Arguments.nonNegative("signal s", s);
    Arguments.nonNegative("observed count n_obs", observed);
    Arguments.nonNegative("background b", b);
    return clsKnown(s, observed, b);
  }

  /**
   * @param s signal count ({@code >= 0})
   * @param observed observed count
   * @param b expected background ({@code >= 0})
   * @param sigmaB Gaussian background uncertainty ({@code >= 0})
   * @return CLs with both probabilities averaged over the truncated Gaussian background prior
   */
  public static double cls(double s, int observed, double b, double sigmaB) {
    Arguments.nonNegative("signal s", s);
    Arguments.nonNegative("observed count n_obs", observed);
    Arguments.nonNegative("background b", b);
    Arguments.nonNegative("background uncertainty sigma_b", sigmaB);
    if (isKnown(b, sigmaB)) {
      return clsKnown(s, observed, b);
    }
    final Prior prior = new Prior(b, sigmaB, observed);
    return prior.cls(s, observed, prior.average(0, observed));
  }

  /**
   * @param observed observed count
   * @param b known background ({@code >= 0})
   * @return the CLs upper limit on s
   */
  public Result upperLimit(int observed, double b) {
    return upperLimit(observed, b, 0);
  }

  /**
   * @param observed observed count
   * @param b expected background ({@code >= 0})
   * @param sigmaB Gaussian background uncertainty ({@code >= 0})
   * @return the CLs upper limit on s
   */
  public Result upperLimit(int observed, double b, double sigmaB) {
    Arguments.nonNegative("observed count n_obs", observed);
    Arguments.nonNegative("background b", b);
    Arguments.nonNegative("background uncertainty sigma_b", sigmaB);
    final double alpha = 1 - confidenceLevel;
    if (observed == 0) {
      final double limit = -Math.log1p(-confidenceLevel);
      return new Result(limit, confidenceLevel, 0, b, sigmaB, Math.exp(-limit));
    }
    final java.util.function.DoubleUnaryOperator cls;
    if (isKnown(b, sigmaB)) {
      cls = s -> clsKnown(s, observed, b);
    } else {
      final Prior prior = new Prior(b, sigmaB, observed);
      final double clb = prior.average(0, observed);
      cls = s -> prior.cls(s, observed, clb);
    }
    double hi = PoissonLimits.upper(observed, confidenceLevel) * (1 + 1e-9) + 1e-9;
    while (cls.applyAsDouble(hi) > alpha) {
      hi *= 2;
    }
    final BrentSolver solver = new BrentSolver(1e-14, 1e-10, 0);
    final double limit = solver.findRoot(s -> cls.applyAsDouble(s) - alpha, 0, hi);
    return new Result(limit, confidenceLevel, observed, b, sigmaB,
      Math.min(1, Math.max(0, cls.applyAsDouble(limit))));
  }

  private static boolean isKnown(double b, double sigmaB) {
    return sigmaB == 0 || sigmaB < RELATIVE_SIGMA_KNOWN * b;
  }

  /** {@code P(N <= n | mu)}. */
  static double poissonCdf(int n, double mu) {
    return mu == 0 ? 1 : RegularizedGamma.Q.value(n + 1.0, mu);
  }

  private static double clsKnown(double s, int n, double b) {
    final double clb = poissonCdf(n, b);
    if (clb > 1e-280) {
      return Math.min(1, poissonCdf(n, s + b) / clb);
    }
    // log-space: CLs = exp(-s) * sum_k (s+b)^k/k! / sum_k b^k/k!
    return Math.min(1, Math.exp(-s + logSumPowers(n, s + b) - logSumPowers(n, b)));
  }

  /** {@code ln sum_{k=0}^{n} mu^k / k!} with scaling by the largest term. */
  private static double logSumPowers(int n, double mu) {
    final double logMu = Math.log(mu);
    double max = Double.NEGATIVE_INFINITY;
    double logTerm = 0;
    final double[] logTerms = new double[n + 1];
    for (int k = 0; k <= n; k++) {
      if (k > 0) {
        logTerm += logMu - Math.log(k);
      }
      logTerms[k] = logTerm;
      max = Math.max(max, logTerm);
    }
    final NeumaierSum sum = NeumaierSum.create();
    for (final double t : logTerms) {
      sum.add(Math.exp(t - max));
    }
    return max + Math.log(sum.value());
  }

  /**
   * Simpson nodes and weights of the truncated Gaussian background prior. The Poisson probability
   * {@code P(N <= n | s + b')} changes from 1 to 0 within a few √(n+1) of {@code b' = n - s}, which for s ≥ 0 lies
   * below {@code c = n + 20 + 10 √(n+1)}; when the range extends past c (σ_b large against n), [lo, c] and [c, hi]
   * get {@value #SIMPSON_INTERVALS} intervals each, so the step stays small where the integrand changes.
   */
  private static final class Prior {
    private final double[] nodes;
    private final double[] weights;

    Prior(double b, double sigmaB, int n) {
      final double lo = Math.max(0, b - RANGE_SIGMAS * sigmaB);
      final double hi = b + RANGE_SIGMAS * sigmaB;
      final double c = n + 20 + 10 * Math.sqrt(n + 1.0);
      final double[] edges = c > lo && c < hi ? new double[] {lo, c, hi} : new double[] {lo, hi};
      final int panels = edges.length - 1;
      nodes = new double[panels * (SIMPSON_INTERVALS + 1)];
      weights = new double[nodes.length];
      final NormalDistribution gauss = NormalDistribution.of(b, sigmaB);
      final NeumaierSum norm = NeumaierSum.create();
      int k = 0;
      for (int panel = 0; panel < panels; panel++) {
        final double a = edges[panel];
        final double e = edges[panel + 1];
        final double h = (e - a) / SIMPSON_INTERVALS;
        for (int i = 0; i <= SIMPSON_INTERVALS; i++) {
          final double x = i == SIMPSON_INTERVALS ? e : a + i * h;
          final double w = i == 0 || i == SIMPSON_INTERVALS ? 1 : (i % 2 == 1 ? 4 : 2);
          nodes[k] = x;
          weights[k] = w * h * gauss.density(x);
          norm.add(weights[k]);
          k++;
        }
      }
      final double total = norm.value();
      for (int i = 0; i < weights.length; i++) {
        weights[i] /= total;
      }
    }

    double average(double s, int n) {
      final NeumaierSum sum = NeumaierSum.create();
      for (int i = 0; i < nodes.length; i++) {
        sum.add(weights[i] * poissonCdf(n, s + nodes[i]));
      }
      return sum.value();
    }

    double cls(double s, int n, double clb) {
      return Math.min(1, average(s, n) / clb);
    }
  }
}
