package triage.core.ratio;

import java.util.Arrays;

/**
 * Per-feature affine standardisation z_k = (x_k − mean_k) / std_k applied to every input before
 * the network.
 *
 * <p>{@link #weighted} computes the reference sample's weighted moments with the corrected
 * two-pass algorithm ("Algorithms for computing the sample variance: analysis and recommendations",
 * <i>Am. Stat.</i> 37 (1983) 242) and Neumaier-compensated sums:
 * mean = Σ w x / Σ w; var = [Σ w (x − mean)² − (Σ w (x − mean))² / Σ w] / Σ w (population form,
 * no Bessel correction). Edge cases: a feature whose variance is not positive (constant feature,
 * or negative weights making the estimate ≤ 0) gets std = 1 so it is only centred.
 *
 * @param mean per-feature shift
 * @param std  per-feature scale, each finite and &gt; 0
 */
public record Standardisation(double[] mean, double[] std) {

  /** Validates and copies. */
  public Standardisation {
    if (mean.length != std.length || mean.length == 0) {
      throw new IllegalArgumentException("mean and std must have the same positive length");
    }
    mean = mean.clone();
    std = std.clone();
    for (int k = 0; k < mean.length; k++) {
      if (!Double.isFinite(mean[k]) || !Double.isFinite(std[k]) || !(std[k] > 0)) {
        throw new IllegalArgumentException("invalid standardisation for feature " + k);
      }
    }
  }

  /** Number of features. */
  public int features() {
    return mean.length;
  }

  /** Copy of the shifts. */
  @Override
  public double[] mean() {
    return mean.clone();
  }

  /** Copy of the scales. */
  @Override
  public double[] std() {
    return std.clone();
  }

  /** Shift of feature k. */
  double meanAt(int k) {
    return mean[k];
  }

  /** Scale of feature k. */
  double stdAt(int k) {
    return std[k];
  }

  /** Standardised value of x for feature k: (x − mean_k) / std_k. */
  double apply(int k, double x) {
    return (x - mean[k]) / std[k];
  }

  /**
   * Weighted moments of a feature-major sample (feature k of event i at {@code k·n + i}).
   *
   * @param features feature-major values, length nFeatures·n
   * @param weights  event weights, length n, with positive sum
   * @param nFeatures number of features
   */
  static Standardisation weighted(double[] features, double[] weights, int nFeatures) {
    int n = weights.length;
    double sw = compensatedSum(weights, 0, n);
    if (!(sw > 0)) {
      throw new IllegalArgumentException("sum of weights must be positive");
    }
    double[] m = new double[nFeatures];
    double[] s = new double[nFeatures];
    for (int k = 0; k < nFeatures; k++) {
      int base = k * n;
      double sum = 0;
      double c = 0;
      for (int i = 0; i < n; i++) {
        double v = weights[i] * features[base + i];
        double t = sum + v;
        c += Math.abs(sum) >= Math.abs(v) ? (sum - t) + v : (v - t) + sum;
        sum = t;
      }
      double mean = (sum + c) / sw;
      double sq = 0;
      double sqc = 0;
      double lin = 0;
      double linc = 0;
      for (int i = 0; i < n; i++) {
        double dx = features[base + i] - mean;
        double v = weights[i] * dx;
        double t = lin + v;
        linc += Math.abs(lin) >= Math.abs(v) ? (lin - t) + v : (v - t) + lin;
        lin = t;
        double q = v * dx;
        double u = sq + q;
        sqc += Math.abs(sq) >= Math.abs(q) ? (sq - u) + q : (q - u) + sq;
        sq = u;
      }
      double l = lin + linc;
      double var = ((sq + sqc) - l * l / sw) / sw;
      // A feature with one value (over the events that carry weight) has no spread: its weighted mean may come out
      // an ulp off the value and the variance as rounding noise (seen: sd 1.7e-25 for a column of 0.1, which
      // standardised every event to about -8e7 and left the network constant). Such a feature is centred on its
      // value and keeps scale 1; so does one whose sd is within 64 ulp of its magnitude (rounding noise).
      double lo = Double.POSITIVE_INFINITY;
      double hi = Double.NEGATIVE_INFINITY;
      for (int i = 0; i < n; i++) {
        if (weights[i] != 0) {
          lo = Math.min(lo, features[base + i]);
          hi = Math.max(hi, features[base + i]);
        }
      }
      double sd = Math.sqrt(var);
      if (lo == hi) {
        m[k] = lo;
        s[k] = 1.0;
      } else {
        m[k] = mean;
        s[k] = var > 0 && Double.isFinite(var) && sd > 64 * Math.ulp(Math.max(Math.abs(lo), Math.abs(hi))) ? sd : 1.0;
      }
    }
    return new Standardisation(m, s);
  }

  /** Neumaier-compensated sum of {@code a[from..to)}. */
  static double compensatedSum(double[] a, int from, int to) {
    double sum = 0;
    double c = 0;
    for (int i = from; i < to; i++) {
      double v = a[i];
      double t = sum + v;
      c += Math.abs(sum) >= Math.abs(v) ? (sum - t) + v : (v - t) + sum;
      sum = t;
    }
    return sum + c;
  }

  @Override
  public boolean equals(Object o) {
    return o instanceof Standardisation other
        && Arrays.equals(mean, other.mean) && Arrays.equals(std, other.std);
  }

  @Override
  public int hashCode() {
    return 31 * Arrays.hashCode(mean) + Arrays.hashCode(std);
  }

  @Override
  public String toString() {
    return "Standardisation[mean=" + Arrays.toString(mean) + ", std=" + Arrays.toString(std) + "]";
  }
}
