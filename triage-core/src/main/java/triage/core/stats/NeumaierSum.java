package triage.core.stats;

/**
 * A running sum with Neumaier's compensation (an improved Kahan–Babuška sum).
 *
 * <p>Formula: s = Σ x_i, with the rounding error of every addition kept in a separate compensation term.
 *
 * <ul>
 *   <li>Empty: 0.</li>
 *   <li>NaN or infinite terms make the sum NaN or infinite as in plain summation.</li>
 * </ul>
 *
 * <p>Algorithm: "Rundungsfehleranalyse einiger Verfahren zur Summation endlicher Summen",
 * ZAMM 54 (1974) 39–51, doi:10.1002/zamm.19740540106. The error bound is 2u|s| + O(n u²) Σ|x_i|,
 * independent of n to first order (Accuracy and Stability of Numerical Algorithms, 2nd ed., §4.3).
 *
 * <p>Sums merged with {@link #combine} equal the single-stream sum only to within that bound; a fixed merge order
 * makes results reproducible.
 */
public final class NeumaierSum {
  /** The running sum of the terms. */
  private double sum;

  /** The accumulated rounding error of the additions. */
  private double compensation;

  /** A sum of nothing. */
  public NeumaierSum() {
    // empty
  }

  /** A new sum of nothing. */
  public static NeumaierSum create() {
    return new NeumaierSum();
  }

  /** Adds a term; returns this sum. */
  public NeumaierSum add(double x) {
    double t = sum + x;
    if (Math.abs(sum) >= Math.abs(x)) {
      compensation += (sum - t) + x;
    } else {
      compensation += (x - t) + sum;
    }
    sum = t;
    return this;
  }

  /** Adds another sum's terms (its value and compensation). */
  public void combine(NeumaierSum other) {
    add(other.sum);
    add(other.compensation);
  }

  /** The compensated sum (the plain sum once it is infinite or NaN, so ∞ + finite stays ∞). */
  public double value() {
    return Double.isFinite(sum) ? sum + compensation : sum;
  }

  /** The compensated sum of the squares of an array. */
  public static double ofSquares(double[] values) {
    NeumaierSum s = new NeumaierSum();
    for (double v : values) {
      s.add(v * v);
    }
    return s.value();
  }

  /** The compensated sum of an array. */
  public static double of(double... values) {
    NeumaierSum s = new NeumaierSum();
    for (double v : values) {
      s.add(v);
    }
    return s.value();
  }
}
