package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.core.inference.Tolerance.assertAbsolute;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class CountingSignificanceTest {

  // CHECK-VALUES.md §2 known-background table, [C]; formula of the asymptotic-formulae paper, EPJC 71 (2011) 1554,
  // Sec. 5.
  static Stream<Arguments> asimovKnownBackground() {
    return Stream.of(
      Arguments.of(1, 1, 0.878970262),
      Arguments.of(3, 1, 2.256181484),
      Arguments.of(5, 1, 3.391329183),
      Arguments.of(10, 1, 5.723084483),
      Arguments.of(5, 0.5, 4.046831847),
      Arguments.of(10, 10, 2.779548025),
      Arguments.of(10, 100, 0.983991645),
      Arguments.of(50, 100, 4.651831084),
      Arguments.of(100, 10000, 0.998340240));
  }

  @ParameterizedTest
  @MethodSource
  void asimovKnownBackground(double s, double b, double z) {
    // tolerance: 1e-9 relative (values printed to 9-10 digits)
    assertRelative(z, CountingSignificance.asimovZ(s, b), 1e-9, "Z_A(" + s + "," + b + ")");
    // the observed-data formula at n = s + b (Asimov data set) equals Z_A (same expression)
    assertRelative(z, CountingSignificance.likelihoodRatioZ(s + b, b), 1e-9, "Z_LR(s+b, b)");
    // sigma_b = 0 is the known-b case
    assertEquals(CountingSignificance.asimovZ(s, b), CountingSignificance.asimovZ(s, b, 0), 0.0);
  }

  // CHECK-VALUES.md §2 background-uncertainty table.
  static Stream<Arguments> asimovWithUncertainty() {
    return Stream.of(
      // [Q] public README of the formula's authors' circle: "ExpectedSignificance(50,100,7) returns 3.72 sigma"; [C]
      Arguments.of(50, 100, 7, 3.719532576),
      // [Q2] a public self-test asserts 3.0 < Z < 3.2; [C]
      Arguments.of(50, 100, 10, 3.172972861),
      Arguments.of(10, 100, 10, 0.690196063), // [C]
      Arguments.of(5, 1, 0.5, 2.763723941), // [C]
      Arguments.of(10, 10, 1, 2.615942802), // [C]
      Arguments.of(10, 10, 5, 1.361636951), // [C]
      Arguments.of(100, 1000, 100, 0.924711195), // [C]
      Arguments.of(10, 10, 1e-3, 2.779547845)); // [C]
  }

  @ParameterizedTest
  @MethodSource
  void asimovWithUncertainty(double s, double b, double sigma, double z) {
    // tolerance: 1e-9 relative
    assertRelative(z, CountingSignificance.asimovZ(s, b, sigma), 1e-9, "Z_A(" + s + "," + b + "," + sigma + ")");
  }

  @Test
  void quotedRoundedAsimov() {
    // [Q] README example: (50, 100, 7) -> "3.72 sigma"; printed to 2 decimals
    assertAbsolute(3.72, CountingSignificance.asimovZ(50, 100, 7), 0.005, "rounded quote");
    // [Q2] self-test 3.0 < Z < 3.2 for (50, 100, 10)
    final double z = CountingSignificance.asimovZ(50, 100, 10);
    assertTrue(z > 3.0 && z < 3.2);
  }

  // asimov-z.csv: [C] mpmath 50 digits (generate_fixtures.py): s << b series branch, sigma_b -> 0 pitfall.
  static Stream<Arguments> asimovHighPrecision() {
    return Fixtures.rows("asimov-z.csv").stream().map(r -> Arguments.of(r[0], r[1], r[2], r[3]));
  }

  @ParameterizedTest
  @MethodSource
  void asimovHighPrecision(double s, double b, double sigma, double z) {
    // tolerance: 1e-12 relative; for sigma_b > 0 with s << b the documented loss is log10((b+sigma^2)/s)
    // digits, so 1e-9 there
    final double tol = sigma > 0 && s / b < 0.01 ? 1e-9 : 1e-12;
    assertRelative(z, CountingSignificance.asimovZ(s, b, sigma), tol, "Z_A(" + s + "," + b + "," + sigma + ")");
  }

  @Test
  void sigmaToZeroPitfall() {
    // CHECK-VALUES.md §2 numerical pitfall [C]: naive code gives 2.78242 at sigma_b=1e-6 and 2.34977 at 1e-7;
    // the true value is 2.7795480248. Tolerance 1e-10 absolute (10 decimals printed).
    assertAbsolute(2.7795480248, CountingSignificance.asimovZ(10, 10, 1e-6), 1e-10, "sigma_b=1e-6");
    assertAbsolute(2.7795480248, CountingSignificance.asimovZ(10, 10, 1e-7), 1e-10, "sigma_b=1e-7");
    // continuity and monotonicity across the switch to the known-b formula (Z_A decreases with sigma_b)
    double previous = CountingSignificance.asimovZ(10, 10);
    for (double sigma = 1e-12; sigma <= 1; sigma *= 1.5) {
      final double z = CountingSignificance.asimovZ(10, 10, sigma);
      assertTrue(z <= previous + 1e-15, "monotone at sigma=" + sigma);
      previous = z;
    }
    // at sigma_b = 1e-8 and 2e-8 the value agrees with the pitfall value 2.7795480248 [C] to 1e-10
    assertAbsolute(2.7795480248, CountingSignificance.asimovZ(10, 10, 1e-8), 1e-10, "sigma_b=1e-8");
    // just above the switch the sigma_b formula agrees with the known-b formula; tolerance 1e-14 relative
    assertRelative(CountingSignificance.asimovZ(10, 10), CountingSignificance.asimovZ(10, 10, 1e-7), 1e-14,
      "above switch");
  }

  // CHECK-VALUES.md §2 observed-data table: [Q2] a general-purpose astronomy statistics library's tests, and [C].
  static Stream<Arguments> likelihoodRatio() {
    return Stream.of(
      Arguments.of(10, 5, 1.96543726),
      Arguments.of(5, 1, 2.84506224),
      Arguments.of(100, 23, 11.8294207),
      Arguments.of(1, 2, -0.78339367),
      Arguments.of(1, 20, -5.65760863));
  }

  @ParameterizedTest
  @MethodSource
  void likelihoodRatio(double n, double b, double z) {
    // tolerance: 1e-8 relative (values printed to 9 significant digits)
    assertRelative(z, CountingSignificance.likelihoodRatioZ(n, b), 1e-8, "Z(" + n + "," + b + ")");
  }

  @Test
  void likelihoodRatioOneSidedP() {
    // CHECK-VALUES.md §2: the library's two-sided p 0.0493636 for (10, 5); one-sided 0.0246818 [C]
    final double z = CountingSignificance.likelihoodRatioZ(10, 5);
    assertRelative(0.0246818, Significance.pFromZ(z), 2e-6, "one-sided");
    assertRelative(0.0493636, Significance.twoSidedPFromZ(z), 2e-6, "two-sided");
  }

  // likelihood-ratio-z.csv: [C] mpmath (generate_fixtures.py), n close to b, n = 0 and n >> b.
  static Stream<Arguments> likelihoodRatioHighPrecision() {
    return Fixtures.rows("likelihood-ratio-z.csv").stream().map(r -> Arguments.of(r[0], r[1], r[2]));
  }

  @ParameterizedTest
  @MethodSource
  void likelihoodRatioHighPrecision(double n, double b, double z) {
    // tolerance: 1e-12 relative
    assertRelative(z, CountingSignificance.likelihoodRatioZ(n, b), 1e-12, "Z(" + n + "," + b + ")");
  }

  // CHECK-VALUES.md §3 Z_Bi table; (150,100,1) [Q2] printed tutorial output and [C];
  // the others [C]; (5,1,1) p = 7/64 exactly.
  static Stream<Arguments> zBi() {
    return Stream.of(
      Arguments.of(150, 100, 1, 9.41650467538e-4, 3.108043896),
      Arguments.of(5, 1, 1, 7.0 / 64, 1.229859),
      Arguments.of(4, 5, 5, 0.0480214922, 1.664348),
      Arguments.of(10, 20, 10, 2.09226014e-4, 3.528164),
      Arguments.of(10, 5, 10.0 / 3, 3.98737775e-4, 3.353669),
      Arguments.of(140, 400, 4, 5.00549464e-4, 3.290218));
  }

  @ParameterizedTest
  @MethodSource
  void zBi(double nOn, double nOff, double tau, double p, double z) {
    final CountingSignificance.ZBiResult r = CountingSignificance.zBi(nOn, nOff, tau);
    // tolerance: 1e-9 relative in p (printed to 9-12 digits), 1e-6 absolute in Z (printed to 6 decimals)
    assertRelative(p, r.pValue(), 1e-9, "p_Bi");
    assertAbsolute(z, r.z(), 1e-6, "Z_Bi");
    assertEquals(r.z(), Significance.zFromP(r.pValue()), 0.0);
  }

  @Test
  void zBiExactBinomial() {
    // p_Bi = P[Bin(n_on + n_off, 1/(1+tau)) >= n_on] (Nucl. Instrum. Meth. A 595 (2008) 480):
    // (5, 1, 1) -> P[Bin(6, 1/2) >= 5] = 7/64 exactly;
    // tolerance 4 ulp-ish: 1e-15 relative
    assertRelative(7.0 / 64, CountingSignificance.zBi(5, 1, 1).pValue(), 1e-15, "7/64");
    // CHECK-VALUES.md §3: Z(s=50, b=100, 10%) maps to n_on=150, tau=1, n_off=100: 3.1080439 [C]
    assertAbsolute(3.1080439, CountingSignificance.zBiFromBackground(150, 100, 10).z(), 1e-7, "from b, sigma");
  }

  // zbi-background.csv: [C] scipy.special.betainc with non-integer arguments (generate_fixtures.py).
  static Stream<Arguments> zBiFromBackground() {
    return Fixtures.rows("zbi-background.csv").stream().map(r -> Arguments.of(r[0], r[1], r[2], r[3], r[4]));
  }

  @ParameterizedTest
  @MethodSource
  void zBiFromBackground(double n, double b, double sigma, double p, double z) {
    final CountingSignificance.ZBiResult r = CountingSignificance.zBiFromBackground(n, b, sigma);
    // tolerance: 1e-11 relative in p and Z
    assertRelative(p, r.pValue(), 1e-11, "p_Bi");
    assertRelative(z, r.z(), 1e-11, "Z_Bi");
    assertRelative(b / (sigma * sigma), r.tau(), 1e-15, "tau");
  }

  @Test
  void zBiPoissonLimit() {
    // sigma_b -> 0: p_Bi -> P(N >= n | b). Exact Poisson tail P(N >= 5 | 1) = 1 - e^-1 (1 + 1 + 1/2 + 1/6 + 1/24)
    // (closed form); tolerance 1e-13 relative
    final double p = 1 - Math.exp(-1) * (1 + 1 + 0.5 + 1.0 / 6 + 1.0 / 24);
    assertRelative(p, CountingSignificance.zBiFromBackground(5, 1, 0).pValue(), 1e-13, "Poisson limit");
    // and the small-sigma Z_Bi approaches it (tau = 1e6): tolerance 1e-4 relative
    assertRelative(p, CountingSignificance.zBiFromBackground(5, 1, 1e-3).pValue(), 1e-4, "near limit");
    assertEquals(1.0, CountingSignificance.zBi(0, 3, 1).pValue());
    assertEquals(Double.NEGATIVE_INFINITY, CountingSignificance.zBi(0, 3, 1).z());
  }

  // CHECK-VALUES.md §3 Li–Ma eq. (17) table: [Q2] a general-purpose astronomy statistics library's tests and [C].
  static Stream<Arguments> liMa() {
    return Stream.of(
      Arguments.of(10, 20, 0.1, 3.6850322319420274),
      Arguments.of(10, 8, 1, 0.47189166410776),
      Arguments.of(10, 5, 0.3, 3.5853812867949024),
      Arguments.of(10, 23, 0.1, 3.443415522820395),
      Arguments.of(5, 1, 1, 1.7061745691234782),
      Arguments.of(1, 20, 1, -4.590373638528086),
      Arguments.of(150, 100, 1, 3.172972861)); // [C]
  }

  @ParameterizedTest
  @MethodSource
  void liMa(double nOn, double nOff, double alpha, double s) {
    // tolerance: 1e-12 relative (1e-9 for the 10-digit [C] row)
    assertRelative(s, CountingSignificance.liMaZ(nOn, nOff, alpha), 1e-9, "Li-Ma 17");
  }

  @Test
  void asimovWithUncertaintyEqualsLiMaOnAsimovData() {
    // CHECK-VALUES.md §2/§3 [C]: the sigma_b formula equals Li–Ma eq. 17 with n_on = s+b, n_off = tau b,
    // tau = b/sigma_b^2; e.g. (50, 100, 10) <-> (150, 100, alpha=1). Tolerance 1e-12 relative.
    final double[][] cases = {{50, 100, 10}, {10, 10, 1}, {5, 1, 0.5}, {100, 1000, 100}};
    for (final double[] c : cases) {
      final double tau = c[1] / (c[2] * c[2]);
      assertRelative(CountingSignificance.liMaZ(c[0] + c[1], tau * c[1], 1 / tau),
        CountingSignificance.asimovZ(c[0], c[1], c[2]), 1e-12, "identity");
    }
  }

  @Test
  void edgeCases() {
    assertEquals(0.0, CountingSignificance.likelihoodRatioZ(7, 7), 0.0);
    assertEquals(0.0, CountingSignificance.asimovZ(0, 7), 0.0);
    assertEquals(0.0, CountingSignificance.asimovZ(0, 7, 2), 0.0);
    // n = 0: Z = -sqrt(2 b) (closed form)
    assertRelative(-Math.sqrt(6), CountingSignificance.likelihoodRatioZ(0, 3), 1e-15, "n=0");
    assertThrows(InferenceArgumentException.class, () -> CountingSignificance.likelihoodRatioZ(-1, 3));
    assertThrows(InferenceArgumentException.class, () -> CountingSignificance.likelihoodRatioZ(1, 0));
    assertThrows(InferenceArgumentException.class, () -> CountingSignificance.asimovZ(1, 1, Double.NaN));
    assertThrows(InferenceArgumentException.class, () -> CountingSignificance.zBi(1, 1, 0));
    assertThrows(InferenceArgumentException.class, () -> CountingSignificance.zBi(1, 1, 1).reject(1.5));
    assertTrue(CountingSignificance.zBi(150, 100, 1).reject(0.001));
  }
}
