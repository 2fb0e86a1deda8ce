package triage.core.ratio;

import java.util.ArrayList;
import java.util.List;

/**
 * Generated samples with known densities, for the tests and {@link FitBenchmark}. All use
 * {@link SplitMix64} so a seed gives the same events on every JDK.
 *
 * <p>Weighted reference samples are drawn from a proposal q and weighted by p/q, so the weighted
 * reference density is the target p:
 * <ul>
 *   <li>Gaussian: p = N(0, I_d), q = N(0, s² I_d) with s = 1.25, w = s^d exp(−|x|²(1 − 1/s²)/2);</li>
 *   <li>exponential: p = Exp(1), q = Exp(0.8), w = 1.25 e^{−0.2 x}.</li>
 * </ul>
 */
final class SyntheticData {
  /** Proposal width of the Gaussian reference. */
  static final double PROPOSAL_SIGMA = 1.25;

  private SyntheticData() {
  }

  /** Names x0..x{d−1}. */
  static List<String> names(int d) {
    List<String> n = new ArrayList<>();
    for (int k = 0; k < d; k++) {
      n.add("x" + k);
    }
    return n;
  }

  /** Weighted N(0, I) reference, feature-major, with weights; returns {features, weights}. */
  static double[][] gaussianReference(int d, int nRef, SplitMix64 rng) {
    double[] ref = new double[d * nRef];
    double[] w = new double[nRef];
    double s = PROPOSAL_SIGMA;
    double norm = Math.pow(s, d);
    for (int i = 0; i < nRef; i++) {
      double r2 = 0;
      for (int k = 0; k < d; k++) {
        double v = s * rng.nextGaussian();
        ref[k * nRef + i] = v;
        r2 += v * v;
      }
      w[i] = norm * Math.exp(-0.5 * r2 * (1.0 - 1.0 / (s * s)));
    }
    return new double[][] {ref, w};
  }

  /**
   * Reference N(0, I) (weighted), observed N(μ, I).
   */
  static TrainingData gaussianShift(double[] mu, int nRef, int nObs, long seed) {
    int d = mu.length;
    SplitMix64 rng = new SplitMix64(seed);
    double[][] ref = gaussianReference(d, nRef, rng);
    double[] obs = new double[d * nObs];
    for (int j = 0; j < nObs; j++) {
      for (int k = 0; k < d; k++) {
        obs[k * nObs + j] = mu[k] + rng.nextGaussian();
      }
    }
    return TrainingData.of(names(d), ref[0], ref[1], obs);
  }

  /**
   * Reference N(0, I) (weighted); observed: nObs − nBump events from N(0, I) and nBump from
   * N(centre, width² I).
   */
  static TrainingData gaussianBump(double[] centre, double width, int nRef, int nObs, int nBump,
                   long seed) {
    int d = centre.length;
    SplitMix64 rng = new SplitMix64(seed);
    double[][] ref = gaussianReference(d, nRef, rng);
    double[] obs = new double[d * nObs];
    for (int j = 0; j < nObs; j++) {
      boolean bump = j < nBump;
      for (int k = 0; k < d; k++) {
        obs[k * nObs + j] = bump ? centre[k] + width * rng.nextGaussian() : rng.nextGaussian();
      }
    }
    return TrainingData.of(names(d), ref[0], ref[1], obs);
  }

  /**
   * One dimension: reference Exp(1) (drawn from Exp(0.8), weighted); observed nObs − nBump
   * from Exp(1) and nBump from N(centre, width²).
   */
  static TrainingData exponentialBump(int nRef, int nObs, int nBump, double centre, double width,
                    long seed) {
    SplitMix64 rng = new SplitMix64(seed);
    double[] ref = new double[nRef];
    double[] w = new double[nRef];
    for (int i = 0; i < nRef; i++) {
      double x = rng.nextExponential(0.8);
      ref[i] = x;
      w[i] = 1.25 * Math.exp(-0.2 * x);
    }
    double[] obs = new double[nObs];
    for (int j = 0; j < nObs; j++) {
      obs[j] = j < nBump ? centre + width * rng.nextGaussian() : rng.nextExponential(1.0);
    }
    return TrainingData.of(names(1), ref, w, obs);
  }
}
