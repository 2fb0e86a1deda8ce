package triage.core.ranking;

import triage.core.stats.NeumaierSum;

/**
 * Binned Jensen–Shannon divergence between the weighted histograms of an observed and a reference sample.
 *
 * <p>Formula: with normalised bin contents p (observed) and q (reference) and {@code m = (p + q)/2},
 * {@code JSD = KL(p||m)/2 + KL(q||m)/2 = sum_k [p_k ln(p_k/m_k) + q_k ln(q_k/m_k)]/2} with {@code 0 ln 0 = 0}; in
 * nats ({@link LogBase#NATURAL}, range {@code [0, ln 2]}) or bits ({@link LogBase#BITS}, range {@code [0, 1]}).
 * This is the divergence itself, the square of the Jensen–Shannon distance.
 *
 * <p>Edge cases:
 * <ul>
 *   <li>identical histograms give exactly 0; disjoint histograms give {@code ln 2} (1 bit);</li>
 *   <li>values outside the edges go to an underflow and an overflow bin ({@link OutOfRange#EXTRA_BINS}, the
 *       default) or are dropped ({@link OutOfRange#DROP}; the histograms are then normalised over the range, and
 *       a sample with no weight in range throws);</li>
 *   <li>negative weights: see {@link NegativeWeights}; a bin with negative total content throws
 *       {@link RankingArgumentException} even with {@link NegativeWeights#ALLOW};</li>
 *   <li>quantile binning of a constant reference gives one bin {@code [v, v]}.</li>
 * </ul>
 *
 * <p>Algorithm: binary search of each value in the edges, compensated bin sums, and the per-bin form
 * {@code (p+q)/4 g(d)}, {@code d = (p-q)/(p+q)}, {@code g(d) = (1+d) ln(1+d) + (1-d) ln(1-d)}, which is
 * non-negative term by term; g is summed as the series {@code sum_{k>=1} d^(2k)/(k(2k-1))} for {@code |d| < 0.1}.
 * Reference: "Divergence measures based on the Shannon entropy", IEEE Trans. Inf. Theory 37 (1991) 145,
 * doi:10.1109/18.61115.
 *
 * <p>Accuracy: about 1e-15 relative, including nearly identical histograms (no cancellation).
 */
public final class BinnedJensenShannon {
  private static final double LN2 = Math.log(2);
  private static final int DEFAULT_BINS = 20;

  /** Logarithm base of the result. */
  public enum LogBase {
    /** Natural logarithm (nats). */
    NATURAL,
    /** Base-2 logarithm (bits). */
    BITS
  }

  /** Treatment of values outside the bin edges. */
  public enum OutOfRange {
    /** Underflow and overflow bins take the values below and above the edges. */
    EXTRA_BINS,
    /** Values outside the edges are ignored. */
    DROP
  }

  private final Binning binning;
  private final LogBase logBase;
  private final OutOfRange outOfRange;
  private final NegativeWeights negativeWeights;

  private BinnedJensenShannon(Binning binning, LogBase logBase, OutOfRange outOfRange,
                NegativeWeights negativeWeights) {
    this.binning = binning;
    this.logBase = logBase;
    this.outOfRange = outOfRange;
    this.negativeWeights = negativeWeights;
  }

  /**
   * @return 20 reference-quantile bins, natural log, extra bins, negative weights rejected
   */
  public static BinnedJensenShannon withDefaults() {
    return new BinnedJensenShannon(Binning.referenceQuantiles(DEFAULT_BINS), LogBase.NATURAL,
      OutOfRange.EXTRA_BINS, NegativeWeights.REJECT);
  }

  /**
   * @param v binning
   * @return a copy using it
   */
  public BinnedJensenShannon with(Binning v) {
    return new BinnedJensenShannon(Arguments.notNull("binning", v), logBase, outOfRange, negativeWeights);
  }

  /**
   * @param v logarithm base
   * @return a copy using it
   */
  public BinnedJensenShannon with(LogBase v) {
    return new BinnedJensenShannon(binning, Arguments.notNull("log base", v), outOfRange, negativeWeights);
  }

  /**
   * @param v out-of-range treatment
   * @return a copy using it
   */
  public BinnedJensenShannon with(OutOfRange v) {
    return new BinnedJensenShannon(binning, logBase, Arguments.notNull("out-of-range treatment", v),
      negativeWeights);
  }

  /**
   * @param v negative-weight policy
   * @return a copy using it
   */
  public BinnedJensenShannon with(NegativeWeights v) {
    return new BinnedJensenShannon(binning, logBase, outOfRange,
      Arguments.notNull("negative-weight policy", v));
  }

  /**
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return the bin edges this configuration uses for that reference
   */
  public double[] edges(double[] y, double[] wy) {
    return edges(WeightedSample.of("reference", y, wy, negativeWeights));
  }

  private double[] edges(WeightedSample ref) {
    if (binning instanceof Binning.Edges e) {
      return e.edges();
    }
    final int bins = ((Binning.ReferenceQuantiles) binning).bins();
    final double[] v = ref.values;
    final double[] raw = new double[bins + 1];
    raw[0] = v[0];
    raw[bins] = v[v.length - 1];
    final NeumaierSum cum = NeumaierSum.create();
    int idx = 0;
    cum.add(ref.weights[0]);
    for (int k = 1; k < bins; k++) {
      final double target = (double) k / bins * ref.total;
      while (idx < v.length - 1 && cum.value() < target * (1 - 1e-12)) {
        idx++;
        cum.add(ref.weights[idx]);
      }
      raw[k] = v[idx];
    }
    int count = 1;
    for (int k = 1; k <= bins; k++) {
      if (raw[k] > raw[count - 1]) {
        raw[count++] = raw[k];
      }
    }
    if (count == 1) {
      return new double[] {raw[0], raw[0]};
    }
    return java.util.Arrays.copyOf(raw, count);
  }

  /**
   * @param x observed values
   * @param y reference values
   * @return unweighted JSD
   */
  public double statistic(double[] x, double[] y) {
    return statistic(x, null, y, null);
  }

  /**
   * @param x observed values
   * @param wx observed weights (null for unit weights)
   * @param y reference values
   * @param wy reference weights (null for unit weights)
   * @return JSD in the configured base
   */
  public double statistic(double[] x, double[] wx, double[] y, double[] wy) {
    return statistic(WeightedSample.of("observed", x, wx, negativeWeights),
        WeightedSample.of("reference", y, wy, negativeWeights));
  }

  /** {@link #statistic(double[], double[], double[], double[])} on samples already sorted and validated. */
  double statistic(WeightedSample a, WeightedSample b) {
    final double[] e = edges(b);
    final double[] p = histogram(a, e, "observed", true);
    final double[] q = histogram(b, e, "reference", true);
    return divergence(p, q, logBase);
  }

  /**
   * As {@link #statistic(WeightedSample, WeightedSample)}, but NaN instead of an exception when a bin of either
   * sample ends with negative content (signed weights), where the divergence is undefined.
   */
  double statisticOrNaN(WeightedSample a, WeightedSample b) {
    final double[] e = edges(b);
    return divergenceOrNaN(histogram(a, e, "observed", false), histogram(b, e, "reference", false), logBase);
  }

  /** The bin contents; a negative one throws when {@code strict}. */
  private double[] histogram(WeightedSample s, double[] e, String name, boolean strict) {
    final int k = e.length - 1;
    final NeumaierSum[] bins = new NeumaierSum[k + 2];
    for (int i = 0; i < bins.length; i++) {
      bins[i] = NeumaierSum.create();
    }
    for (int i = 0; i < s.size(); i++) {
      bins[binIndex(s.values[i], e)].add(s.weights[i]);
    }
    final int from = outOfRange == OutOfRange.DROP ? 1 : 0;
    final int to = outOfRange == OutOfRange.DROP ? k + 1 : k + 2;
    final double[] h = new double[to - from];
    for (int i = from; i < to; i++) {
      h[i - from] = bins[i].value();
      if (strict && h[i - from] < 0) {
        throw Arguments.error("%s bin %d content must be >= 0 but was %s", name, i - 1, h[i - from]);
      }
    }
    return h;
  }

  /** 0 = underflow, 1..K = bins, K+1 = overflow; last bin closed. */
  static int binIndex(double v, double[] e) {
    final int k = e.length - 1;
    if (v < e[0]) {
      return 0;
    }
    if (v > e[k]) {
      return k + 1;
    }
    if (v == e[k]) {
      return k;
    }
    int lo = 0;
    int hi = k;
    // invariant e[lo] <= v < e[hi]
    while (hi - lo > 1) {
      final int mid = (lo + hi) >>> 1;
      if (e[mid] <= v) {
        lo = mid;
      } else {
        hi = mid;
      }
    }
    return lo + 1;
  }

  /**
   * As {@link #divergence}, but NaN when a bin of either histogram is negative (signed weights), where the divergence
   * is undefined.
   */
  public static double divergenceOrNaN(double[] p, double[] q, LogBase base) {
    for (double[] h : new double[][] {p, q}) {
      for (double c : h) {
        if (c < 0) {
          return Double.NaN;
        }
      }
    }
    return divergence(p, q, base);
  }

  /**
   * Jensen–Shannon divergence of two non-negative histograms (normalised here).
   *
   * @param p first histogram
   * @param q second histogram (same length)
   * @param base logarithm base
   * @return JSD
   */
  public static double divergence(double[] p, double[] q, LogBase base) {
    Arguments.notNull("histogram p", p);
    Arguments.notNull("histogram q", q);
    Arguments.notNull("log base", base);
    if (p.length != q.length || p.length == 0) {
      throw Arguments.error("histograms must have the same non-zero length but had %d and %d", p.length,
        q.length);
    }
    final double sp = checkedTotal("histogram p", p);
    final double sq = checkedTotal("histogram q", q);
    final NeumaierSum sum = NeumaierSum.create();
    for (int k = 0; k < p.length; k++) {
      final double pk = p[k] / sp;
      final double qk = q[k] / sq;
      final double s = pk + qk;
      if (s > 0) {
        sum.add(0.25 * s * g((pk - qk) / s));
      }
    }
    final double v = Math.max(0, sum.value());
    return base == LogBase.BITS ? v / LN2 : v;
  }

  private static double checkedTotal(String name, double[] h) {
    final NeumaierSum s = NeumaierSum.create();
    for (int i = 0; i < h.length; i++) {
      if (!(h[i] >= 0 && h[i] < Double.POSITIVE_INFINITY)) {
        throw Arguments.error("%s[%d] must be finite and >= 0 but was %s", name, i, h[i]);
      }
      s.add(h[i]);
    }
    final double t = s.value();
    if (!(t > 0)) {
      throw Arguments.error("total of %s must be > 0 but was %s (no weight in range?)", name, t);
    }
    return t;
  }

  /** {@code g(d) = (1+d) ln(1+d) + (1-d) ln(1-d)} for {@code |d| <= 1}. */
  static double g(double d) {
    final double a = Math.abs(d);
    if (a >= 0.1) {
      final double t1 = (1 + a) * Math.log1p(a);
      final double t2 = a == 1 ? 0 : (1 - a) * Math.log1p(-a);
      return t1 + t2;
    }
    final double d2 = a * a;
    double power = d2;
    double sum = 0;
    for (int k = 1; k < 40; k++) {
      final double term = power / (k * (2.0 * k - 1));
      sum += term;
      if (term <= 1e-17 * sum) {
        break;
      }
      power *= d2;
    }
    return sum;
  }
}
