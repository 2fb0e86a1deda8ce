package triage.core.region;

import java.util.LinkedHashMap;
import java.util.Map;
import triage.core.inference.ClsUpperLimit;
import triage.core.inference.CountingSignificance;
import triage.core.inference.Significance;

/**
 * The statistics of a frozen region on independent data: a cut-and-count with n observed events, b expected from
 * the reference with its MC statistical error and systematic variations.
 *
 * <ul>
 *   <li>σ_syst: per systematic (weight variation, or scale shift of features with b evaluated at 1 ± δ) the
 *   larger of |b_up − b| and |b_down − b|, added in quadrature over systematics; σ_b = √(σ_stat² + σ_syst²);</li>
 *   <li>Z_Bi and its one-sided p: NIM A 595 (2008) 480 (see {@link CountingSignificance}), with τ = b/σ_b²;</li>
 *   <li>Z_A: the profile-likelihood (Asimov) significance of "Asymptotic formulae for likelihood-based tests of
 *   new physics", EPJ C 71 (2011) 1554, with σ_b, evaluated at s = n − b (when positive);</li>
 *   <li>the 95% CL upper limit on the signal count by CLs ("Presentation of search results: the CLs technique",
 *   J. Phys. G 28 (2002) 2693), with the
 *   background uncertainty averaged over a truncated Gaussian;</li>
 *   <li>compatibility with the discovery: the discovery excess scaled by the ratio of expected yields,
 *   s_pred = (n_d − b_d)·b/b_d, compared with n − b as z = (n − b − s_pred)/σ_z with, to first order in the
 *   independent fluctuations of n, b (MC statistical error σ_stat), n_d and b_d (σ_d),
 *   σ_z² = (b + s_pred) + (n_d/b_d)² σ_stat² + (b/b_d)² n_d + (b n_d/b_d²)² σ_d² (the numerator is
 *   n − n_d·b/b_d, so b enters with the factor n_d/b_d). A systematic variation that moves b and b_d by the same
 *   relative amount cancels in n − n_d·b/b_d, so σ_syst is left out. The MC errors of b and b_d are taken as
 *   independent (separate simulated samples); if the follow-up reference is the discovery's own simulated file,
 *   they are correlated and σ_z is overstated. A Gaussian approximation, stated as such;</li>
 *   <li>growth for 5σ: the factor k by which the follow-up sample would have to grow (n, b, σ_stat scale with k,
 *   relative systematics stay) for the median Asimov significance of s_pred·k to reach 5.</li>
 * </ul>
 *
 * @param observed n
 * @param expected b
 * @param statError σ_stat = √Σw²
 * @param systError σ_syst
 * @param totalError σ_b
 * @param variations per variation {up, down} expected yields
 * @param scales per scale shift {up, down} expected yields (features scaled by 1 + δ, 1 − δ)
 * @param zBi Z_Bi
 * @param pBi its one-sided p-value
 * @param zAsimov Z_A at s = n − b (NaN when n ≤ b)
 * @param clsUpperLimit95 the 95% CL CLs upper limit on the signal count
 * @param predictedSignal s_pred from the discovery
 * @param compatibilityZ z of the follow-up excess against s_pred
 * @param growthFor5Sigma k (NaN when s_pred ≤ 0)
 */
public record FollowUp(long observed, double expected, double statError, double systError, double totalError,
    Map<String, double[]> variations, Map<String, double[]> scales, double zBi, double pBi, double zAsimov,
    double clsUpperLimit95, double predictedSignal, double compatibilityZ, double growthFor5Sigma) {

  /** Computes the follow-up statistics without scale shifts; see the other method. */
  public static FollowUp compute(long n, double b, double statError, Map<String, double[]> variations,
      long discoveryObserved, double discoveryExpected, double discoveryStatError) {
    return compute(n, b, statError, variations, Map.of(), discoveryObserved, discoveryExpected, discoveryStatError);
  }

  /**
   * Computes the follow-up statistics.
   *
   * @param n observed events in the region
   * @param b expected reference yield
   * @param statError √Σw² of the reference in the region
   * @param variations per variation {b_up, b_down}
   * @param scales per scale shift {b at 1 + δ, b at 1 − δ}, folded into σ_syst like the variations
   * @param discoveryObserved n_d
   * @param discoveryExpected b_d
   * @param discoveryStatError σ_d, the MC statistical error √Σw² of b_d
   */
  public static FollowUp compute(long n, double b, double statError, Map<String, double[]> variations,
      Map<String, double[]> scales, long discoveryObserved, double discoveryExpected, double discoveryStatError) {
    double syst2 = systSquared(b, variations.values()) + systSquared(b, scales.values());
    double syst = Math.sqrt(syst2);
    double sigma = Math.sqrt(statError * statError + syst2);
    double zBi = Double.NaN;
    double pBi = Double.NaN;
    if (b > 0 && sigma > 0) {
      var r = CountingSignificance.zBiFromBackground(n, b, sigma);
      zBi = r.z();
      pBi = r.pValue();
    } else if (b > 0) {
      double z = CountingSignificance.likelihoodRatioZ(n, b);
      zBi = z;
      pBi = Significance.pFromZ(z);
    }
    double zA = n > b && b > 0 ? CountingSignificance.asimovZ(n - b, b, sigma) : Double.NaN;
    double limit = b > 0 ? ClsUpperLimit.withDefaults().withConfidenceLevel(0.95)
        .upperLimit((int) Math.min(n, Integer.MAX_VALUE), b, sigma).upperLimit() : Double.NaN;
    double sPred = discoveryExpected > 0 ? (discoveryObserved - discoveryExpected) * b / discoveryExpected
        : Double.NaN;
    double compat = compatibilityZ(n, b, statError, discoveryObserved, discoveryExpected, discoveryStatError);
    double growth = growthFor5Sigma(sPred, b, statError, syst);
    return new FollowUp(n, b, statError, syst, sigma, new LinkedHashMap<>(variations), new LinkedHashMap<>(scales),
        zBi, pBi, zA, limit, sPred, compat, growth);
  }

  /** The compatibility z of the follow-up with the discovery (see the class comment); NaN when b_d ≤ 0. */
  static double compatibilityZ(long n, double b, double statError, long discoveryObserved, double discoveryExpected,
      double discoveryStatError) {
    if (!(discoveryExpected > 0)) {
      return Double.NaN;
    }
    double ratio = discoveryObserved / discoveryExpected;
    double scale = b / discoveryExpected;
    double sPred = (discoveryObserved - discoveryExpected) * scale;
    double variance = b + Math.max(0, sPred) + ratio * ratio * statError * statError
        + scale * scale * discoveryObserved + scale * ratio * scale * ratio * discoveryStatError * discoveryStatError;
    return (n - b - sPred) / Math.sqrt(variance);
  }

  /**
   * The smallest k with Z_A(k·s, k·b, σ(k)) ≥ 5, where σ(k)² = k·σ_stat² + (k·σ_syst)², by bisection on a
   * doubling bracket; NaN when s ≤ 0 or when even k = 1e6 does not reach 5 (systematics dominate).
   */
  static double growthFor5Sigma(double s, double b, double statError, double systError) {
    if (!(s > 0) || !(b > 0)) {
      return Double.NaN;
    }
    java.util.function.DoubleUnaryOperator z = k -> CountingSignificance.asimovZ(k * s, k * b,
        Math.sqrt(k * statError * statError + k * k * systError * systError));
    if (z.applyAsDouble(1) >= 5) {
      return 1;
    }
    double lo = 1;
    double hi = 2;
    while (z.applyAsDouble(hi) < 5) {
      lo = hi;
      hi *= 2;
      if (hi > 1e6) {
        return Double.NaN;
      }
    }
    for (int i = 0; i < 100 && hi - lo > 1e-9 * hi; i++) {
      double mid = 0.5 * (lo + hi);
      if (z.applyAsDouble(mid) >= 5) {
        hi = mid;
      } else {
        lo = mid;
      }
    }
    return hi;
  }

  /**
   * The squared systematic error of a yield b from its shifted yields [up, down]: for each systematic the larger
   * shift of the two, added in quadrature (common practice, no source). The one rule of the discovery yields a
   * region records, of the check that reads them back, and of the follow-up.
   */
  public static double systSquared(double b, Iterable<double[]> shifts) {
    double syst2 = 0;
    for (double[] v : shifts) {
      double d = Math.max(Math.abs(v[0] - b), Math.abs(v[1] - b));
      syst2 += d * d;
    }
    return syst2;
  }
}
