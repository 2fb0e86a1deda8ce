package triage.core.ranking;

import triage.core.stats.NeumaierSum;

/**
 * Weighted Wasserstein-1 (earth mover's) distance between two one-dimensional weighted samples.
 *
 * <p>Formula: {@code W_1 = int |F(t) - G(t)| dt} over the weighted ECDFs F (observed) and G (reference); for
 * equal-size unweighted samples this is the mean of {@code |x_(i) - y_(i)|}. With
 * {@link Units#REFERENCE_STANDARD_DEVIATION} the distance is divided by the weighted standard deviation of the
 * reference, {@code s = sqrt(sum w (y - ybar)^2 / sum w)} with {@code ybar = sum w y / sum w} (the
 * frequency-weight, population form: denominator {@code sum w}, not {@code sum w - 1}).
 *
 * <p>Edge cases:
 * <ul>
 *   <li>identical samples give 0; the distance is symmetric in the two samples;</li>
 *   <li>{@link Units#REFERENCE_STANDARD_DEVIATION} with a constant reference ({@code s = 0}) throws
 *       {@link RankingArgumentException};</li>
 *   <li>negative weights: see {@link NegativeWeights}; with {@link NegativeWeights#ALLOW} the formula is applied
 *       to the signed ECDFs (and s must still be real and positive);</li>
 *   <li>empty samples, non-finite values or weights throw.</li>
 * </ul>
 *
 * <p>Algorithm: sort both samples with their weights and sweep the distinct pooled values once, adding
 * {@code |F - G| (v_{k+1} - v_k)}, {@code O((n+m) log(n+m))}; two-pass weighted variance. Reference:
 * "On Wasserstein two-sample testing and related families of
 * nonparametric tests", Entropy 19 (2017) 47, arXiv:1509.02237 (the {@code int |F - G|} form in one dimension).
 *
 * <p>Accuracy: compensated sums; relative error about {@code 1e-15} times the ratio of the value range to W.
 */
public final class WeightedWasserstein {
  /** Units of the distance. */
  public enum Units {
    /** In the units of the variable. */
    RAW,
    /** Divided by the weighted standard deviation of the reference sample. */
    REFERENCE_STANDARD_DEVIATION
  }

  private final Units units;
  private final NegativeWeights negativeWeights;

  private WeightedWasserstein(Units units, NegativeWeights negativeWeights) {
    this.units = units;
    this.negativeWeights = negativeWeights;
  }

  /**
   * @return a distance in {@link Units#RAW} with {@link NegativeWeights#REJECT}
   */
  public static WeightedWasserstein withDefaults() {
    return new WeightedWasserstein(Units.RAW, NegativeWeights.REJECT);
  }

  /**
   * @param v units
   * @return a copy using them
   */
  public WeightedWasserstein with(Units v) {
    return new WeightedWasserstein(Arguments.notNull("units", v), negativeWeights);
  }

  /**
   * @param v negative-weight policy
   * @return a copy using it
   */
  public WeightedWasserstein with(NegativeWeights v) {
    return new WeightedWasserstein(units, Arguments.notNull("negative-weight policy", v));
  }

  /**
   * @param x observed values
   * @param y reference values
   * @return unweighted W_1
   */
  public double statistic(double[] x, double[] y) {
    return statistic(x, null, y, null);
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return weighted W_1 in the configured units
   */
  public double statistic(double[] x, double[] wx, double[] y, double[] wy) {
    return statistic(WeightedSample.of("observed", x, wx, negativeWeights),
        WeightedSample.of("reference", y, wy, negativeWeights));
  }

  /** {@link #statistic(double[], double[], double[], double[])} on samples already sorted and validated. */
  double statistic(WeightedSample a, WeightedSample b) {
    final double w = distance(a, b);
    if (units == Units.RAW) {
      return w;
    }
    final double s = standardDeviation(b);
    if (!(s > 0)) {
      throw Arguments.error("reference standard deviation must be > 0 but was %s", s);
    }
    return w / s;
  }

  static double distance(WeightedSample a, WeightedSample b) {
    final double[] x = a.values;
    final double[] y = b.values;
    final int n = x.length;
    final int m = y.length;
    final NeumaierSum cx = NeumaierSum.create();
    final NeumaierSum cy = NeumaierSum.create();
    final NeumaierSum area = NeumaierSum.create();
    int i = 0;
    int j = 0;
    double gap = 0;
    double previous = 0;
    boolean first = true;
    while (i < n || j < m) {
      final double v = i < n && (j >= m || x[i] <= y[j]) ? x[i] : y[j];
      if (!first) {
        area.add(gap * (v - previous));
      }
      while (i < n && x[i] == v) {
        cx.add(a.weights[i++]);
      }
      while (j < m && y[j] == v) {
        cy.add(b.weights[j++]);
      }
      gap = Math.abs(cx.value() / a.total - cy.value() / b.total);
      previous = v;
      first = false;
    }
    return area.value();
  }

  /**
   * Weighted population standard deviation {@code sqrt(sum w (y - ybar)^2 / sum w)}, two-pass.
   *
   * @param y reference values
   * @param wy weights (null for unit weights)
   * @return the standard deviation
   */
  public double referenceStandardDeviation(double[] y, double[] wy) {
    return standardDeviation(WeightedSample.of("reference", y, wy, negativeWeights));
  }

  static double standardDeviation(WeightedSample b) {
    final NeumaierSum s = NeumaierSum.create();
    for (int i = 0; i < b.size(); i++) {
      s.add(b.weights[i] * b.values[i]);
    }
    final double mean = s.value() / b.total;
    final NeumaierSum ss = NeumaierSum.create();
    for (int i = 0; i < b.size(); i++) {
      final double d = b.values[i] - mean;
      ss.add(b.weights[i] * d * d);
    }
    final double var = ss.value() / b.total;
    if (var < 0) {
      throw Arguments.error("weighted reference variance must be >= 0 but was %s", var);
    }
    return Math.sqrt(var);
  }
}
