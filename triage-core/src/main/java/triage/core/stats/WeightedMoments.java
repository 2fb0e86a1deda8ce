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
 *   <li>Zero or negative weights are accepted as given; when V₁ ≤ 0 the mean and variances are NaN. From the first
 *   such weight on, compensated sums about a fixed shift replace the incremental update (whose running Σ w could
 *   pass through zero); positive weights alone never leave the incremental update.</li>
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

  /**
   * Whether a zero or negative weight has been seen. Then the incremental update is left (its running Σ w can
   * pass through or near zero, where it divides by it) for compensated sums about a fixed shift K:
   * S1 = Σ w (x − K), S2 = Σ w (x − K)², with K the weighted mean when the switch happened (or the first value),
   * so that mean = K + S1/Σw and Σ w (x − m)² = S2 − S1²/Σw. Sums of positive weights never switch, so their
   * results are those of the incremental update.
   */
  private boolean shifted;

  /** The shift K of the shifted sums. */
  private double shift;

  /** Σ w (x − K), compensated (shifted mode). */
  private final NeumaierSum s1 = new NeumaierSum();

  /** Σ w (x − K)², compensated (shifted mode). */
  private final NeumaierSum s2 = new NeumaierSum();

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
    if (!shifted && !(w > 0)) {
      toShifted(count == 0 ? x : mean);
    }
    count++;
    sumW.add(w);
    sumW2.add(w * w);
    if (shifted) {
      double d = x - shift;
      s1.add(w * d);
      s2.add(w * d * d);
      return;
    }
    double newW = runningW + w;
    double delta = x - mean;
    double r = delta * w / newW;
    mean += r;
    m2 += runningW * delta * r;
    runningW = newW;
  }

  /** Leaves the incremental update for shifted sums about {@code k} (see {@link #shifted}). */
  private void toShifted(double k) {
    shifted = true;
    shift = k;
    if (count > 0) {
      // Σ w (x − K) and Σ w (x − K)² of what was seen so far, from its mean and m2 about that mean.
      double d = mean - k;
      s1.add(runningW * d);
      s2.add(m2 + runningW * d * d);
    }
  }

  /** Merges another accumulator into this one. */
  public void combine(WeightedMoments other) {
    if (other.count == 0) {
      return;
    }
    if (shifted || other.shifted) {
      if (!shifted) {
        toShifted(count == 0 ? other.centre() : mean);
      }
      // The other's Σ w (x − K) and Σ w (x − K)² about this shift.
      double w = other.shifted ? other.sumW.value() : other.runningW;
      double a1 = other.shifted ? other.s1.value() : 0;
      double a2 = other.shifted ? other.s2.value() : other.m2;
      double d = (other.shifted ? other.shift : other.mean) - shift;
      s1.add(a1 + w * d);
      s2.add(a2 + 2 * d * a1 + w * d * d);
      count += other.count;
      sumW.combine(other.sumW);
      sumW2.combine(other.sumW2);
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
    return count > 0 && (shifted ? sumW.value() > 0 : runningW > 0);
  }

  /** A value near the centre of the data (the shift or the running mean), for the shift of a merge. */
  private double centre() {
    return shifted ? shift : mean;
  }

  /** Σ w (x − m)² about the weighted mean. */
  private double centredSquares() {
    return shifted ? s2.value() - s1.value() * s1.value() / sumW.value() : m2;
  }

  /** The weighted mean, or NaN when empty or Σ w ≤ 0. */
  public double mean() {
    if (!defined()) {
      return Double.NaN;
    }
    return shifted ? shift + s1.value() / sumW.value() : mean;
  }

  /** Σ w (x − m)² / Σ w, or NaN when empty or Σ w ≤ 0. */
  public double populationVariance() {
    if (!defined()) {
      return Double.NaN;
    }
    return Math.max(0, centredSquares()) / (shifted ? sumW.value() : runningW);
  }

  /** Σ w (x − m)² / (V₁ − V₂/V₁); NaN for fewer than two values or a non-positive denominator. */
  public double variance() {
    double v1 = sumOfWeights();
    double denominator = v1 - sumOfSquaredWeights() / v1;
    // Negated comparison so that a NaN denominator also gives NaN.
    if (count < 2 || !(denominator > 0)) {
      return Double.NaN;
    }
    return Math.max(0, centredSquares()) / denominator;
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
