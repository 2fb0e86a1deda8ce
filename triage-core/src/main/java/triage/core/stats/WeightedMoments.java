package triage.core.stats;

import java.util.Locale;

/**
 * Count, weight sums, and the weighted mean and variance of a stream of (value, weight) pairs.
 *
 * <p>Formula: with V₁ = Σ w_i and V₂ = Σ w_i², the mean is m = Σ w_i x_i / V₁; the population variance is
 * Σ w_i (x_i − m)² / V₁; the unbiased variance with reliability weights is Σ w_i (x_i − m)² / (V₁ − V₂/V₁),
 * which is the usual n − 1 sample variance when all weights are one.
 *
 * <ul>
 *   <li>Empty: count 0, sums 0, mean and variances NaN.</li>
 *   <li>A single event: mean is its value, population variance 0, unbiased variance NaN.</li>
 *   <li>Zero or negative weights are accepted as given; when V₁ ≤ 0 the mean and variances are NaN.</li>
 * </ul>
 *
 * <p>Algorithm: the weighted incremental update of "Updating mean and variance estimates: an improved
 * method", Comm. ACM 22 (1979) 532–535, doi:10.1145/359146.359153; weight sums are compensated
 * ({@link NeumaierSum}). Streams are merged with the pairwise update of "Updating formulae and a pairwise
 * algorithm for computing sample variances" (technical report, 1979; COMPSTAT 1982, 30–41,
 * doi:10.1007/978-3-642-51461-6_3).
 *
 * <p>Accuracy: on the Statistical Reference Datasets (StRD) univariate sets NumAcc1–4 the standard deviation is
 * exact to about eight
 * significant digits or better, which is what the decimal inputs allow in double precision. A naive
 * Σx² − (Σx)²/n formula fails on NumAcc4.
 */
public final class WeightedMoments {
  /** Number of pairs seen. */
  private long count;

  /** Σ w. */
  private final NeumaierSum sumW = new NeumaierSum();

  /** Σ w². */
  private final NeumaierSum sumW2 = new NeumaierSum();

  /** Running weighted mean. */
  private double mean;

  /** Running Σ w (x − mean)². */
  private double m2;

  /** Running Σ w without compensation, used inside the update (positive weights keep it exact enough). */
  private double runningW;

  /** An empty accumulator. */
  public WeightedMoments() {
    // empty
  }

  /** Adds a value with weight one. */
  public void accept(double x) {
    accept(x, 1.0);
  }

  /** Adds a value with a weight. */
  public void accept(double x, double w) {
    count++;
    sumW.add(w);
    sumW2.add(w * w);
    double newW = runningW + w;
    if (newW == 0) {
      // Weights cancelled exactly: the mean is undefined until more weight arrives.
      runningW = 0;
      mean = 0;
      m2 = 0;
      return;
    }
    double delta = x - mean;
    double r = delta * w / newW;
    mean += r;
    m2 += runningW * delta * r;
    runningW = newW;
  }

  /** Merges another accumulator into this one. */
  public void combine(WeightedMoments other) {
    if (other.count == 0) {
      return;
    }
    if (count == 0) {
      count = other.count;
      sumW.combine(other.sumW);
      sumW2.combine(other.sumW2);
      mean = other.mean;
      m2 = other.m2;
      runningW = other.runningW;
      return;
    }
    double w = runningW + other.runningW;
    double delta = other.mean - mean;
    if (w != 0) {
      mean += delta * other.runningW / w;
      m2 += other.m2 + delta * delta * runningW * other.runningW / w;
    }
    runningW = w;
    count += other.count;
    sumW.combine(other.sumW);
    sumW2.combine(other.sumW2);
  }

  /** Number of values seen. */
  public long count() {
    return count;
  }

  /** Σ w, compensated. */
  public double sumOfWeights() {
    return sumW.value();
  }

  /** Σ w², compensated. */
  public double sumOfSquaredWeights() {
    return sumW2.value();
  }

  /**
   * Whether the mean and variances are defined: a value was seen and the running Σ w the update uses is positive
   * (the test {@link #mean()} makes). With weights that nearly cancel this can be false while the compensated
   * {@link #sumOfWeights()} is a little above zero.
   */
  public boolean defined() {
    return count > 0 && runningW > 0;
  }

  /** The weighted mean, or NaN when empty or Σ w ≤ 0. */
  public double mean() {
    return count == 0 || !(runningW > 0) ? Double.NaN : mean;
  }

  /** Σ w (x − m)² / Σ w, or NaN when empty or Σ w ≤ 0. */
  public double populationVariance() {
    return count == 0 || !(runningW > 0) ? Double.NaN : Math.max(0, m2) / runningW;
  }

  /** Σ w (x − m)² / (V₁ − V₂/V₁); NaN for fewer than two values or a non-positive denominator. */
  public double variance() {
    double v1 = sumOfWeights();
    double denominator = v1 - sumOfSquaredWeights() / v1;
    // Negated comparison so that a NaN denominator also gives NaN.
    if (count < 2 || !(denominator > 0)) {
      return Double.NaN;
    }
    return Math.max(0, m2) / denominator;
  }

  /** √{@link #variance()}. */
  public double standardDeviation() {
    return Math.sqrt(variance());
  }

  /** √{@link #populationVariance()}. */
  public double populationStandardDeviation() {
    return Math.sqrt(populationVariance());
  }

  @Override
  public String toString() {
    return String.format(Locale.ROOT, "n=%d Σw=%.6g mean=%.6g sd=%.6g", count, sumOfWeights(), mean(),
        populationStandardDeviation());
  }
}
