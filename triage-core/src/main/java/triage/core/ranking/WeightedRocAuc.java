package triage.core.ranking;

import triage.core.stats.NeumaierSum;

/**
 * Weighted area under the ROC curve of an observed sample against a reference sample, the weighted Mann–Whitney
 * U statistic divided by the product of the total weights.
 *
 * <p>Formula: {@code AUC = sum_i sum_j wx_i wy_j [1(x_i > y_j) + 1/2 1(x_i = y_j)] / (sum wx sum wy)}, the
 * probability that a weighted observed event scores above a weighted reference event, ties counted half.
 * Unweighted, {@code AUC = U_1 / (n m)} with {@code U_1 = R_1 - n(n+1)/2} (mid-ranks). Callers rank variables by
 * the separation {@code |AUC - 1/2|} ({@link #separation}).
 *
 * <p>Edge cases:
 * <ul>
 *   <li>identical samples give exactly 1/2; disjoint samples give 0 or 1;</li>
 *   <li>negative weights: see {@link NegativeWeights}; with {@link NegativeWeights#ALLOW} the value may leave
 *       {@code [0, 1]};</li>
 *   <li>empty samples, non-finite values or weights throw {@link RankingArgumentException}.</li>
 * </ul>
 *
 * <p>Algorithm: sort both samples with their weights and sweep the distinct pooled values once, adding
 * {@code W_x(v) (W_y(< v) + W_y(v) / 2)} per value, {@code O((n+m) log(n+m))}. References: "On a test of whether
 * one of two random variables is stochastically larger than the other", Ann. Math. Stat. 18 (1947) 50,
 * doi:10.1214/aoms/1177730491; "The area above the ordinal dominance graph and the area below the receiver
 * operating characteristic graph", J. Math. Psych. 12 (1975) 387, doi:10.1016/0022-2496(75)90001-2
 * (AUC = U/(nm)).
 *
 * <p>Accuracy: compensated sums throughout; relative error about 1e-15 for non-negative weights.
 */
public final class WeightedRocAuc {
  private final NegativeWeights negativeWeights;

  private WeightedRocAuc(NegativeWeights negativeWeights) {
    this.negativeWeights = negativeWeights;
  }

  /**
   * @return an AUC with {@link NegativeWeights#REJECT}
   */
  public static WeightedRocAuc withDefaults() {
    return new WeightedRocAuc(NegativeWeights.REJECT);
  }

  /**
   * @param v negative-weight policy
   * @return a copy using it
   */
  public WeightedRocAuc with(NegativeWeights v) {
    return new WeightedRocAuc(Arguments.notNull("negative-weight policy", v));
  }

  /**
   * @param x observed values
   * @param y reference values
   * @return unweighted AUC, {@code P(X > Y) + P(X = Y)/2}
   */
  public double statistic(double[] x, double[] y) {
    return statistic(x, null, y, null);
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return weighted AUC
   */
  public double statistic(double[] x, double[] wx, double[] y, double[] wy) {
    return statistic(WeightedSample.of("observed", x, wx, negativeWeights),
        WeightedSample.of("reference", y, wy, negativeWeights));
  }

  /** {@link #statistic(double[], double[], double[], double[])} on samples already sorted and validated. */
  static double statistic(WeightedSample a, WeightedSample b) {
    final double[] xv = a.values;
    final double[] yv = b.values;
    final int n = xv.length;
    final int m = yv.length;
    final NeumaierSum below = NeumaierSum.create();
    final NeumaierSum u = NeumaierSum.create();
    int i = 0;
    int j = 0;
    while (i < n) {
      final double v = j >= m || xv[i] <= yv[j] ? xv[i] : yv[j];
      double wxGroup = 0;
      double wyGroup = 0;
      while (i < n && xv[i] == v) {
        wxGroup += a.weights[i++];
      }
      while (j < m && yv[j] == v) {
        wyGroup += b.weights[j++];
      }
      u.add(wxGroup * (below.value() + 0.5 * wyGroup));
      below.add(wyGroup);
    }
    return u.value() / a.total / b.total;
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return {@code |AUC - 1/2|}
   */
  public double separation(double[] x, double[] wx, double[] y, double[] wy) {
    return Math.abs(statistic(x, wx, y, wy) - 0.5);
  }

  /** {@link #separation(double[], double[], double[], double[])} on samples already sorted and validated. */
  static double separation(WeightedSample a, WeightedSample b) {
    return Math.abs(statistic(a, b) - 0.5);
  }
}
