package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class ChiSquaredTailTest {

  // CHECK-VALUES.md §7 tail probabilities [C].
  static Stream<Arguments> tail() {
    return Stream.of(
      Arguments.of(47, 50, 0.5945058998), Arguments.of(50, 50, 0.4733984686),
      Arguments.of(60, 50, 0.1572420272), Arguments.of(100, 50, 3.454931e-5),
      Arguments.of(1, 1, 0.3173105079), Arguments.of(4, 1, 0.0455002639),
      Arguments.of(25, 1, 5.733031e-7), Arguments.of(2, 2, 0.3678794412),
      Arguments.of(10, 2, 0.0067379470), Arguments.of(10, 10, 0.4404932851));
  }

  @ParameterizedTest
  @MethodSource
  void tail(double t, double nu, double q) {
    // tolerance: 1e-9 relative (10 digits), 2e-7 for the 7-digit entries
    assertRelative(q, ChiSquaredTail.pValue(t, nu), q < 1e-4 ? 2e-7 : 1e-9, "Q(" + t + "|" + nu + ")");
  }

  // CHECK-VALUES.md §10 Wilks check values [C].
  static Stream<Arguments> wilks() {
    return Stream.of(Arguments.of(25, 1, 5.7330e-7), Arguments.of(9, 1, 0.0026998),
      Arguments.of(3.841, 1, 0.050014), Arguments.of(5.99, 2, 0.050037), Arguments.of(11.83, 2, 0.002699));
  }

  @ParameterizedTest
  @MethodSource
  void wilks(double q, double nu, double p) {
    // tolerance: 2e-4 relative (4 to 5 significant digits printed)
    assertRelative(p, ChiSquaredTail.pValue(q, nu), 2e-4, "chi2 tail");
  }

  // CHECK-VALUES.md §7 upper-tail critical values [C] (3-decimal roundings equal the table of the e-Handbook of
  // Statistical Methods, §1.3.6.7.4): Q(x_alpha | nu) = alpha.
  static Stream<Arguments> criticalValues() {
    return Stream.of(
      Arguments.of(1, 0.05, 3.8415), Arguments.of(1, 0.001, 10.8276), Arguments.of(2, 0.01, 9.2103),
      Arguments.of(5, 0.05, 11.0705), Arguments.of(10, 0.05, 18.3070), Arguments.of(20, 0.001, 45.3147),
      Arguments.of(50, 0.1, 63.1671), Arguments.of(100, 0.01, 135.8067));
  }

  @ParameterizedTest
  @MethodSource
  void criticalValues(double nu, double alpha, double x) {
    // x printed to 4 decimals: |dQ/dx| * 5e-5 / alpha < 3e-4 for these rows; tolerance 3e-4 relative
    assertRelative(alpha, ChiSquaredTail.pValue(x, nu), 3e-4, "Q(x_alpha)");
  }

  // chi2-tail.csv: [C] mpmath gammainc, 50 digits, including far tails (p ~ 1e-219).
  static Stream<Arguments> farTail() {
    return Fixtures.rows("chi2-tail.csv").stream().map(r -> Arguments.of(r[0], r[1], r[2]));
  }

  @ParameterizedTest
  @MethodSource
  void farTail(double t, double nu, double q) {
    // tolerance: 1e-12 relative
    assertRelative(q, ChiSquaredTail.pValue(t, nu), 1e-12, "Q(" + t + "|" + nu + ")");
  }

  @Test
  void closedFormsAndEdges() {
    // nu = 2: Q = exp(-t/2); nu = 1: Q(Z^2|1) = 2(1 - Phi(Z)) (closed forms, §7); tolerance 1e-13 relative
    assertRelative(Math.exp(-30), ChiSquaredTail.pValue(60, 2), 1e-13, "nu=2");
    assertRelative(2 * Significance.pFromZ(7), ChiSquaredTail.pValue(49, 1), 1e-13, "nu=1");
    // one-sided discovery: Z0 = sqrt(q0) from half-chi2 (§10): p = Q(q|1)/2 at q = 25 equals p(Z=5)
    assertRelative(Significance.pFromZ(5), ChiSquaredTail.pValue(25, 1) / 2, 1e-13, "half chi2");
    assertEquals(1.0, ChiSquaredTail.pValue(0, 3));
    assertEquals(Double.NEGATIVE_INFINITY, ChiSquaredTail.z(-1, 3));
    assertEquals(0.0, ChiSquaredTail.pValue(Double.POSITIVE_INFINITY, 3));
    assertThrows(InferenceArgumentException.class, () -> ChiSquaredTail.pValue(1, 0));
    assertThrows(InferenceArgumentException.class, () -> ChiSquaredTail.pValue(Double.NaN, 1));
  }
}
