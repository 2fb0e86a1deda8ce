package triage.core.ranking;

import triage.core.stats.NeumaierSum;

/**
 * A validated weighted sample sorted by value (package-private). Primitive arrays only.
 */
final class WeightedSample {
  /** Sorted values. */
  final double[] values;
  /** Weights in the order of {@link #values}. */
  final double[] weights;
  /** Total weight (compensated sum). */
  final double total;
  /** Sum of squared weights. */
  final double totalSquares;
  /** True when every weight is equal (unweighted sample). */
  final boolean equalWeights;

  private WeightedSample(double[] values, double[] weights, double total, double totalSquares,
              boolean equalWeights) {
    this.values = values;
    this.weights = weights;
    this.total = total;
    this.totalSquares = totalSquares;
    this.equalWeights = equalWeights;
  }

  /**
   * @param name name of the sample in messages
   * @param x values (finite)
   * @param w weights or null for unit weights
   * @param policy negative-weight policy
   */
  static WeightedSample of(String name, double[] x, double[] w, NegativeWeights policy) {
    Arguments.finiteValues(name + " values", x);
    final double total = Arguments.weights(name + " weights", w, x.length, policy);
    final int n = x.length;
    final double[] v = new double[n];
    final double[] ws = new double[n];
    if (w == null) {
      System.arraycopy(x, 0, v, 0, n);
      java.util.Arrays.sort(v);
      java.util.Arrays.fill(ws, 1.0);
      return new WeightedSample(v, ws, n, n, true);
    }
    final int[] order = IndexSort.order(x);
    boolean equal = true;
    final NeumaierSum sq = NeumaierSum.create();
    for (int i = 0; i < n; i++) {
      v[i] = x[order[i]];
      ws[i] = w[order[i]];
      sq.add(ws[i] * ws[i]);
      equal &= ws[i] == w[0];
    }
    return new WeightedSample(v, ws, total, sq.value(), equal);
  }

  int size() {
    return values.length;
  }

  /** Kish effective sample size {@code (sum w)^2 / sum w^2}. */
  double effectiveSize() {
    return total * total / totalSquares;
  }
}
