package triage.core.inference;

import org.apache.commons.statistics.distribution.NormalDistribution;

/**
 * Conversion between a p-value and a Gaussian significance Z.
 *
 * <p>Formula: one-sided {@code p = 1 - Phi(Z) = erfc(Z / sqrt 2) / 2} and {@code Z = Phi^-1(1 - p)};
 * two-sided {@code p = 2 (1 - Phi(|Z|))} and {@code Z = Phi^-1(1 - p / 2)}.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>{@code p = 0} gives {@code Z = +inf}; {@code p = 1} gives {@code Z = -inf} (one-sided) or {@code 0}
 *       (two-sided);</li>
 *   <li>{@code p > 0.5} gives a negative one-sided Z;</li>
 *   <li>{@code Z = +inf} gives {@code p = 0}, {@code Z = -inf} gives {@code p = 1};</li>
 *   <li>p outside {@code [0, 1]} or NaN, and a NaN Z, throw {@link InferenceArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: the tail functions of {@link NormalDistribution} (commons-statistics-distribution), which
 * evaluate {@code erfc} and its inverse directly in the tail instead of forming {@code 1 - p}. Reference for the
 * relation: "Asymptotic formulae for likelihood-based tests of new physics", Eur. Phys. J. C 71 (2011) 1554,
 * doi:10.1140/epjc/s10052-011-1554-0, Sec. 2.
 *
 * <p>Accuracy: a few ulp relative in p for all Z up to about 38 (where p underflows to 0) and in Z for p down to
 * the smallest subnormal double; tested at {@code p = 1e-300}.
 */
public final class Significance {
  private static final NormalDistribution STANDARD_NORMAL = NormalDistribution.of(0, 1);

  private Significance() {
  }

  /**
   * @param p one-sided p-value in {@code [0, 1]}
   * @return {@code Z = Phi^-1(1 - p)}
   */
  public static double zFromP(double p) {
    Arguments.probability("p-value", p);
    if (p == 0) {
      return Double.POSITIVE_INFINITY;
    }
    if (p == 1) {
      return Double.NEGATIVE_INFINITY;
    }
    return STANDARD_NORMAL.inverseSurvivalProbability(p);
  }

  /**
   * @param z significance (may be infinite)
   * @return one-sided {@code p = 1 - Phi(z)}
   */
  public static double pFromZ(double z) {
    Arguments.notNaN("Z", z);
    return STANDARD_NORMAL.survivalProbability(z);
  }

  /**
   * @param p two-sided p-value in {@code [0, 1]}
   * @return {@code |Z| = Phi^-1(1 - p/2)} (non-negative)
   */
  public static double zFromTwoSidedP(double p) {
    Arguments.probability("two-sided p-value", p);
    if (p == 0) {
      return Double.POSITIVE_INFINITY;
    }
    if (p == 1) {
      return 0;
    }
    return STANDARD_NORMAL.inverseSurvivalProbability(0.5 * p);
  }

  /**
   * @param z significance (may be infinite)
   * @return two-sided {@code p = 2 (1 - Phi(|z|))}
   */
  public static double twoSidedPFromZ(double z) {
    Arguments.notNaN("Z", z);
    return 2 * STANDARD_NORMAL.survivalProbability(Math.abs(z));
  }
}
