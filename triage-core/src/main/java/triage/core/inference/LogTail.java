package triage.core.inference;

import org.apache.commons.numbers.gamma.LogBeta;
import org.apache.commons.numbers.gamma.LogGamma;

/**
 * Logarithms of tail probabilities that underflow a double (p below about 1e-308, Z beyond about 38), so that
 * significances stay finite and ordered where a scan compares many strong excesses.
 *
 * <p>Formulas (<i>Numerical Recipes</i>, 3rd ed., §6.2 and §6.4, with the prefactors taken in
 * logarithms):
 * <ul>
 *   <li>{@code ln P(a, x)}, x &lt; a + 1: {@code -x + a ln x - ln Γ(a+1) + ln Σ_k x^k / ((a+1)…(a+k))};</li>
 *   <li>{@code ln Q(a, x)}, x ≥ a + 1: {@code -x + a ln x - ln Γ(a)} plus the log of the continued fraction
 *   {@code 1/(x+1-a- 1·(1-a)/(x+3-a- 2·(2-a)/(x+5-a- …)))}, evaluated by the modified Lentz method;</li>
 *   <li>{@code ln I_x(a, b)}, x &lt; (a+1)/(a+b+2): {@code a ln x + b ln(1-x) - ln a - ln B(a, b)} plus the log of
 *   the incomplete-beta continued fraction.</li>
 * </ul>
 * Outside those ranges the tails are not small and the plain functions are used by the callers. Z from ln p:
 * {@link #zFromLogP}.
 *
 * <p>Accuracy: the sums and fractions converge to 1e-15 relative; ln Γ and ln B are accurate to a few ulp, so ln p
 * is accurate to about 1e-15 × |ln p| absolute and Z to about 1e-13 relative (tested against mpmath).
 */
final class LogTail {
  private static final double EPS = 1e-16;
  private static final double TINY = 1e-300;
  private static final int MAX_TERMS = 100_000;

  /** Lentz's guard: a denominator of magnitude below TINY is replaced by TINY (modified Lentz method). */
  private static double awayFromZero(double x) {
    return Math.abs(x) < TINY ? TINY : x;
  }

  private LogTail() {
  }

  /** {@code ln P(a, x)}, the lower regularised gamma, for {@code 0 < x < a + 1}. */
  static double logLowerGamma(double a, double x) {
    double term = 1;
    double sum = 1;
    for (int k = 1; k < MAX_TERMS; k++) {
      term *= x / (a + k);
      sum += term;
      if (term < EPS * sum) {
        break;
      }
    }
    return -x + a * Math.log(x) - LogGamma.value(a + 1) + Math.log(sum);
  }

  /** {@code ln Q(a, x)}, the upper regularised gamma, for {@code x >= a + 1}. */
  static double logUpperGamma(double a, double x) {
    double b = x + 1 - a;
    double c = 1 / TINY;
    double d = 1 / b;
    double h = d;
    for (int i = 1; i < MAX_TERMS; i++) {
      double an = -i * (i - a);
      b += 2;
      d = an * d + b;
      d = awayFromZero(d);
      c = b + an / c;
      c = awayFromZero(c);
      d = 1 / d;
      double delta = d * c;
      h *= delta;
      if (Math.abs(delta - 1) < EPS) {
        break;
      }
    }
    return -x + a * Math.log(x) - LogGamma.value(a) + Math.log(h);
  }

  /** {@code ln I_x(a, b)}, the regularised incomplete beta, for {@code 0 < x < (a+1)/(a+b+2)}. */
  static double logRegularizedBeta(double x, double a, double b) {
    double qab = a + b;
    double qap = a + 1;
    double qam = a - 1;
    double c = 1;
    double d = 1 - qab * x / qap;
    d = awayFromZero(d);
    d = 1 / d;
    double h = d;
    for (int m = 1; m < MAX_TERMS; m++) {
      int m2 = 2 * m;
      double aa = m * (b - m) * x / ((qam + m2) * (a + m2));
      d = 1 + aa * d;
      d = awayFromZero(d);
      c = 1 + aa / c;
      c = awayFromZero(c);
      d = 1 / d;
      h *= d * c;
      aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
      d = 1 + aa * d;
      d = awayFromZero(d);
      c = 1 + aa / c;
      c = awayFromZero(c);
      d = 1 / d;
      double delta = d * c;
      h *= delta;
      if (Math.abs(delta - 1) < EPS) {
        break;
      }
    }
    return a * Math.log(x) + b * Math.log1p(-x) - Math.log(a) - LogBeta.value(a, b) + Math.log(h);
  }

  /**
   * Z = Φ⁻¹(1 − p) from ln p. Above ln p = −700 it is {@link Significance#zFromP} of e^{ln p}; below, Newton's
   * method on {@code ln Φ̄(z) = ln p} with the asymptotic series
   * {@code ln Φ̄(z) = -z²/2 - ln(z √(2π)) + ln(1 - 1/z² + 3/z⁴ - 15/z⁶ + 105/z⁸)} (Handbook of Mathematical
   * Functions, 26.2.12; its first omitted term, 945/z¹⁰, is below 1e-12 for z above 35).
   */
  static double zFromLogP(double logP) {
    if (logP > -700) {
      return Significance.zFromP(Math.exp(logP));
    }
    if (logP == Double.NEGATIVE_INFINITY) {
      return Double.POSITIVE_INFINITY;
    }
    double z = Math.sqrt(-2 * logP);
    for (int i = 0; i < 50; i++) {
      double z2 = 1 / (z * z);
      double series = 1 + z2 * (-1 + z2 * (3 + z2 * (-15 + z2 * 105)));
      double logTail = -0.5 * z * z - Math.log(z) - 0.5 * Math.log(2 * Math.PI) + Math.log(series);
      double logDensity = -0.5 * z * z - 0.5 * Math.log(2 * Math.PI);
      // d ln Φ̄ / dz = −φ(z)/Φ̄(z)
      double slope = -Math.exp(logDensity - logTail);
      double step = (logTail - logP) / slope;
      z -= step;
      if (Math.abs(step) < 1e-15 * z) {
        break;
      }
    }
    return z;
  }
}
