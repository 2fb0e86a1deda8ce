package triage.core.ranking;

import triage.core.inference.KolmogorovDistribution;
import triage.core.stats.NeumaierSum;

/**
 * Weighted two-sample Kolmogorov–Smirnov test of an observed sample against a weighted reference sample.
 *
 * <p>Formula: with weighted ECDFs {@code F(t) = sum_{x_i <= t} wx_i / sum wx} and
 * {@code G(t) = sum_{y_j <= t} wy_j / sum wy}, {@code D = sup_t |F(t) - G(t)|}. Asymptotic p-value
 * {@code Q_KS(sqrt(n_e m_e / (n_e + m_e)) D)} with the Kish effective sizes {@code n_e = (sum w)^2 / sum w^2}
 * (equal to the sample sizes for unweighted samples). Exact p-value (unweighted samples only)
 * {@code P(D >= d)} under random assignment of the pooled sample.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>ties within and between the samples: both ECDFs are advanced past every copy of a value before the
 *       difference is taken, so D is the supremum over the right-continuous step functions;</li>
 *   <li>D = 0 gives p = 1; identical single values give D = 0;</li>
 *   <li>negative weights: rejected by default, see {@link NegativeWeights}; with {@link NegativeWeights#ALLOW}
 *       the ECDFs may be non-monotone and the asymptotic p-value is only heuristic;</li>
 *   <li>{@link PValueMethod#EXACT} with unequal weights, empty samples, non-finite values or weights throw
 *       {@link RankingArgumentException};</li>
 *   <li>the exact method treats the data as continuous: with ties it is the permutation p-value of the
 *       untied statistic (conservative convention).</li>
 * </ul>
 *
 * <p>Algorithm: sort each sample with its weights (index merge sort) and sweep the pooled distinct values once
 * with compensated cumulative sums, {@code O((n+m) log(n+m))}. Exact p: lattice-path recursion for the fraction
 * of paths from (0,0) to (n,m) that touch {@code |i m - j n| >= D n m},
 * {@code Q(i,j) = (i Q(i-1,j) + j Q(i,j-1)) / (i+j)}, which needs no binomial coefficients (no overflow), in
 * {@code O(n m)} time and {@code O(m)} memory ("The significance probability of the Smirnov two-sample test",
 * Ark. Mat. 3 (1958) 469, doi:10.1007/BF02589501).
 * {@link PValueMethod#AUTO} uses it when both samples have equal weights and {@code n m <= 10^6}.
 * Reference: "Table for estimating the goodness of fit of empirical distributions", Ann. Math. Stat. 19 (1948)
 * 279, doi:10.1214/aoms/1177730256; Kish effective sample size: Survey Sampling (1965).
 *
 * <p>Accuracy: D has the rounding of the cumulative weight sums, about 1e-16 relative. The exact p is accurate
 * to about 1e-14 relative (no cancellation: the touching fraction is accumulated directly). The asymptotic p is
 * that of {@link KolmogorovDistribution#survival(double)}, whose approximation error relative to the finite-sample
 * distribution is of order {@code 1/sqrt(n_e)}.
 */
public final class WeightedKolmogorovSmirnovTest {
  private static final long EXACT_LIMIT = 1_000_000L;

  /** How the p-value is computed. */
  public enum PValueMethod {
    /** Exact for equal-weight samples with {@code n m <= 10^6}, otherwise asymptotic. */
    AUTO,
    /** Exact permutation distribution; requires equal weights within each sample. */
    EXACT,
    /** Asymptotic Kolmogorov distribution with effective sample sizes. */
    ASYMPTOTIC
  }

  private final PValueMethod method;
  private final NegativeWeights negativeWeights;

  private WeightedKolmogorovSmirnovTest(PValueMethod method, NegativeWeights negativeWeights) {
    this.method = method;
    this.negativeWeights = negativeWeights;
  }

  /**
   * Result of the test.
   *
   * @param statistic D
   * @param pValue two-sided p-value
   * @param effectiveObserved Kish effective size of the observed sample
   * @param effectiveReference Kish effective size of the reference sample
   * @param method method used (AUTO resolved)
   */
  public record Result(double statistic, double pValue, double effectiveObserved, double effectiveReference,
             PValueMethod method) {
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
   * @return a test with {@link PValueMethod#AUTO} and {@link NegativeWeights#REJECT}
   */
  public static WeightedKolmogorovSmirnovTest withDefaults() {
    return new WeightedKolmogorovSmirnovTest(PValueMethod.AUTO, NegativeWeights.REJECT);
  }

  /**
   * @param v p-value method
   * @return a copy using it
   */
  public WeightedKolmogorovSmirnovTest with(PValueMethod v) {
    return new WeightedKolmogorovSmirnovTest(Arguments.notNull("p-value method", v), negativeWeights);
  }

  /**
   * @param v negative-weight policy
   * @return a copy using it
   */
  public WeightedKolmogorovSmirnovTest with(NegativeWeights v) {
    return new WeightedKolmogorovSmirnovTest(method, Arguments.notNull("negative-weight policy", v));
  }

  /**
   * @param x observed values
   * @param y reference values
   * @return unweighted D
   */
  public double statistic(double[] x, double[] y) {
    return statistic(x, null, y, null);
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return weighted D
   */
  public double statistic(double[] x, double[] wx, double[] y, double[] wy) {
    return distance(WeightedSample.of("observed", x, wx, negativeWeights),
      WeightedSample.of("reference", y, wy, negativeWeights));
  }

  /**
   * @param x observed values
   * @param y reference values
   * @return unweighted D and p-value
   */
  public Result test(double[] x, double[] y) {
    return test(x, null, y, null);
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return weighted D and p-value
   */
  public Result test(double[] x, double[] wx, double[] y, double[] wy) {
    return test(WeightedSample.of("observed", x, wx, negativeWeights),
        WeightedSample.of("reference", y, wy, negativeWeights));
  }

  /** {@link #test(double[], double[], double[], double[])} on samples already sorted and validated. */
  Result test(WeightedSample a, WeightedSample b) {
    final double d = distance(a, b);
    final double ne = a.effectiveSize();
    final double me = b.effectiveSize();
    final boolean equal = a.equalWeights && b.equalWeights;
    final boolean exact = switch (method) {
      case EXACT -> {
        if (!equal) {
          throw Arguments.error("exact p-value requires equal weights within each sample");
        }
        yield true;
      }
      case ASYMPTOTIC -> false;
      case AUTO -> equal && (long) a.size() * b.size() <= EXACT_LIMIT;
    };
    if (exact) {
      return new Result(d, exactPValue(d, a.size(), b.size()), ne, me, PValueMethod.EXACT);
    }
    final double p = d == 0 ? 1 : KolmogorovDistribution.survival(Math.sqrt(ne * me / (ne + me)) * d);
    return new Result(d, p, ne, me, PValueMethod.ASYMPTOTIC);
  }

  static double distance(WeightedSample a, WeightedSample b) {
    final double[] x = a.values;
    final double[] y = b.values;
    final int n = x.length;
    final int m = y.length;
    final NeumaierSum cx = NeumaierSum.create();
    final NeumaierSum cy = NeumaierSum.create();
    int i = 0;
    int j = 0;
    double d = 0;
    while (i < n || j < m) {
      final double v = i < n && (j >= m || x[i] <= y[j]) ? x[i] : y[j];
      while (i < n && x[i] == v) {
        cx.add(a.weights[i++]);
      }
      while (j < m && y[j] == v) {
        cy.add(b.weights[j++]);
      }
      d = Math.max(d, Math.abs(cx.value() / a.total - cy.value() / b.total));
    }
    return d;
  }

  /**
   * Exact {@code P(D >= d)} for unweighted samples of sizes n and m (lattice-path recursion).
   *
   * @param d observed statistic
   * @param n observed size
   * @param m reference size
   * @return the permutation p-value
   */
  static double exactPValue(double d, int n, int m) {
    final long k = Math.round(d * n * (double) m);
    if (k <= 0) {
      return 1;
    }
    final double[] q = new double[m + 1];
    for (int i = 0; i <= n; i++) {
      for (int j = 0; j <= m; j++) {
        if (i == 0 && j == 0) {
          q[0] = 0;
        } else if (Math.abs((long) i * m - (long) j * n) >= k) {
          q[j] = 1;
        } else {
          final double up = i == 0 ? 0 : i * q[j];
          final double left = j == 0 ? 0 : j * q[j - 1];
          q[j] = (up + left) / (i + j);
        }
      }
    }
    return Math.min(1, q[m]);
  }
}
