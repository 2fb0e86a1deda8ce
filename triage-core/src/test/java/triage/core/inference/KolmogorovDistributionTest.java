package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.inference.Tolerance.assertAbsolute;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class KolmogorovDistributionTest {

  // CHECK-VALUES.md §6 Q_KS check values [C].
  static Stream<Arguments> survival() {
    return Stream.of(
      Arguments.of(1.0, 0.26999967),
      Arguments.of(1.36, 0.04948588),
      Arguments.of(1.63, 0.00984636),
      Arguments.of(2.0, 6.7093e-4));
  }

  @ParameterizedTest
  @MethodSource
  void survival(double lambda, double q) {
    // tolerance: 1e-6 relative (6 to 8 significant digits printed; 5e-5 for the 5-digit value)
    assertRelative(q, KolmogorovDistribution.survival(lambda), lambda == 2.0 ? 5e-5 : 1e-6, "Q_KS");
  }

  // CHECK-VALUES.md §6 exact Kolmogorov quantiles c(alpha) [C]; the tabulated column (1.22 ... 1.95) is [Q]
  // from the two-sample critical-value table (scribd document 379401720).
  static Stream<Arguments> criticalCoefficients() {
    return Stream.of(
      Arguments.of(0.10, 1.223848, 1.22),
      Arguments.of(0.05, 1.358099, 1.36),
      Arguments.of(0.025, 1.480207, 1.48),
      Arguments.of(0.01, 1.627624, 1.63),
      Arguments.of(0.005, 1.730818, 1.73),
      Arguments.of(0.001, 1.949475, 1.95));
  }

  @ParameterizedTest
  @MethodSource
  void criticalCoefficients(double alpha, double exact, double tabulated) {
    // Q_KS(c) = alpha at the exact quantile printed to 6 decimals: |dQ/dc| * 5e-7 relative to alpha is
    // below 2e-5 here, tolerance 2e-5 relative
    assertRelative(alpha, KolmogorovDistribution.survival(exact), 2e-5, "Q_KS(c)");
    // the tabulated 2-decimal coefficient brackets alpha within the rounding: Q_KS(c +- 0.005) brackets alpha
    final double hi = KolmogorovDistribution.survival(tabulated - 0.005);
    final double lo = KolmogorovDistribution.survival(tabulated + 0.005);
    org.junit.jupiter.api.Assertions.assertTrue(lo <= alpha && alpha <= hi, "tabulated " + tabulated);
  }

  // kolmogorov-asymptotic.csv: [C] scipy.stats.kstwobign.sf, both sides of the series switch at 1.18.
  static Stream<Arguments> asymptoticFixture() {
    return Fixtures.rows("kolmogorov-asymptotic.csv").stream().map(r -> Arguments.of(r[0], r[1]));
  }

  @ParameterizedTest
  @MethodSource
  void asymptoticFixture(double lambda, double sf) {
    // tolerance: 1e-13 relative
    assertRelative(sf, KolmogorovDistribution.survival(lambda), 1e-13, "Q_KS(" + lambda + ")");
  }

  // kolmogorov-one-sample.csv: [C] exact P(D_n >= d) from scipy's Durbin matrix routine
  // (scipy.stats._ksstats._kolmogn_DMTW, Marsaglia–Tsang–Wang) and the public scipy.stats.kstwo.sf, which for
  // n > 140 switches to the Pelz–Good approximation ("Computing the two-sided Kolmogorov–Smirnov distribution",
  // J. Stat. Softw. 39(11) (2011)), n = 1..1000.
  static Stream<Arguments> oneSampleExact() {
    return Fixtures.rows("kolmogorov-one-sample.csv").stream()
      .map(r -> Arguments.of((int) r[0], r[1], r[2], r[3]));
  }

  @ParameterizedTest
  @MethodSource
  void oneSampleExact(int n, double d, double sfKstwo, double sfExact) {
    final double p = KolmogorovDistribution.oneSampleSurvival(d, n);
    final double s = n * d * d;
    if (s > 7.24 || (s > 3.76 && n > 99)) {
      // tail: twice the exact one-sided probability, tolerance 1e-9 relative (see oneSampleTail)
      assertRelative(sfExact, p, 1e-9, "tail n=" + n);
    } else {
      // exact method: tolerance 1e-10 absolute (documented absolute error about 1e-13)
      assertAbsolute(sfExact, p, 1e-10, "exact n=" + n + " d=" + d);
    }
    // scipy's public kstwo.sf (exact for n <= 140, Pelz–Good above): tolerance 5e-7 absolute
    assertAbsolute(sfKstwo, p, 5e-7, "kstwo n=" + n);
  }

  // kolmogorov-one-sample-tail.csv: [C] 2 × scipy.stats.ksone.sf (Smirnov's exact one-sided formula), equal to
  // scipy.stats.kstwo.sf in the tail; p from 1e-3 to 1e-12, n from 10 to 2,000.
  static Stream<Arguments> oneSampleTail() {
    return Fixtures.rows("kolmogorov-one-sample-tail.csv").stream().map(r -> Arguments.of((int) r[0], r[1], r[2]));
  }

  @ParameterizedTest
  @MethodSource
  void oneSampleTail(int n, double d, double sf) {
    // tolerance: 1e-9 relative (the log-space sum loses about n·1e-16 relative; the two-sided correction left
    // out is below 1.6e-10 relative in the tail, and in the exact branch the absolute error is about 1e-13)
    final double p = KolmogorovDistribution.oneSampleSurvival(d, n);
    if (n * d * d > 7.24 || (n * d * d > 3.76 && n > 99)) {
      assertRelative(sf, p, 1e-9, "tail n=" + n + " d=" + d);
    } else {
      assertAbsolute(sf, p, 1e-10, "exact n=" + n + " d=" + d);
    }
  }

  @Test
  void oneSampleClosedForms() {
    // n = 1: D_1 = max(U, 1-U) so P(D_1 >= d) = 2(1 - d) for d in [1/2, 1] (closed form); tolerance 1e-13
    assertAbsolute(0.5, KolmogorovDistribution.oneSampleSurvival(0.75, 1), 1e-13, "n=1");
    // d <= 1/(2n): probability 1; d > 1: 0
    assertEquals(1.0, KolmogorovDistribution.oneSampleSurvival(0.05, 10));
    assertEquals(0.0, KolmogorovDistribution.oneSampleSurvival(1.01, 10));
    assertEquals(1.0, KolmogorovDistribution.survival(0));
    assertEquals(0.0, KolmogorovDistribution.survival(Double.POSITIVE_INFINITY));
    assertThrows(InferenceArgumentException.class, () -> KolmogorovDistribution.survival(Double.NaN));
    assertThrows(InferenceArgumentException.class, () -> KolmogorovDistribution.oneSampleSurvival(0.1, 0));
  }
}
