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

class SignificanceTest {

  // CHECK-VALUES.md §1, one-sided table; Z=1 [C] mpmath 30 digits, Z=2..6 [Q] OEIS A239383..A239387 and [C].
  static Stream<Arguments> pFromZ() {
    return Stream.of(
      Arguments.of(1, 0.158655253931457051),
      Arguments.of(2, 0.0227501319481792072),
      Arguments.of(3, 0.00134989803163009453),
      Arguments.of(4, 3.16712418331199213e-5),
      Arguments.of(5, 2.86651571879193912e-7),
      Arguments.of(6, 9.86587645037698141e-10));
  }

  @ParameterizedTest
  @MethodSource
  void pFromZ(double z, double p) {
    // tolerance: 1e-14 relative
    assertRelative(p, Significance.pFromZ(z), 1e-14, "p(Z=" + z + ")");
    assertRelative(z, Significance.zFromP(p), 1e-14, "Z(p)");
  }

  // CHECK-VALUES.md §1, p -> Z table, [C] to 10 decimals (p=0.05 also [Q] arXiv:2009.07249, Sec. 1).
  static Stream<Arguments> zFromP() {
    return Stream.of(
      Arguments.of(0.10, 1.2815515655),
      Arguments.of(0.05, 1.6448536270),
      Arguments.of(0.025, 1.9599639845),
      Arguments.of(0.01, 2.3263478740),
      Arguments.of(0.001, 3.0902323062),
      Arguments.of(2.87e-7, 4.9997657768));
  }

  @ParameterizedTest
  @MethodSource
  void zFromP(double p, double z) {
    // tolerance: 6e-11 absolute (values printed to 10 decimals)
    assertAbsolute(z, Significance.zFromP(p), 6e-11, "Z(p=" + p + ")");
  }

  @Test
  void fiveSigmaQuoted() {
    // [Q] "Criteria for projected discovery and exclusion sensitivities of counting experiments", EPJC (2021),
    // doi:10.1140/epjc/s10052-020-08819-6, arXiv:2009.07249: "Z>5 (p<2.867×10⁻⁷)";
    // the rounded p does not give exactly 5: tolerance 1e-3 absolute in Z (CHECK-VALUES.md §1).
    assertAbsolute(5.0, Significance.zFromP(2.867e-7), 1e-3, "Z(2.867e-7)");
  }

  // CHECK-VALUES.md §1 two-sided table (Review of Particle Physics, "Statistics" review, Table 40.1 layout [M],
  // numbers [C]).
  static Stream<Arguments> twoSided() {
    return Stream.of(
      Arguments.of(1, 0.3173105),
      Arguments.of(2, 0.0455003),
      Arguments.of(3, 0.0026998),
      Arguments.of(4, 6.334e-5),
      Arguments.of(5, 5.733e-7),
      Arguments.of(6, 1.973e-9));
  }

  @ParameterizedTest
  @MethodSource
  void twoSided(double z, double alpha) {
    // tolerance: 1e-3 relative (values printed to 4 significant digits)
    assertRelative(alpha, Significance.twoSidedPFromZ(z), 1e-3, "two-sided p");
    assertRelative(alpha, Significance.twoSidedPFromZ(-z), 1e-3, "two-sided p of -Z");
  }

  // CHECK-VALUES.md §1 two-sided alpha -> delta table, [C] to 4 decimals.
  static Stream<Arguments> twoSidedZ() {
    return Stream.of(
      Arguments.of(0.2, 1.2816),
      Arguments.of(0.1, 1.6449),
      Arguments.of(0.05, 1.9600),
      Arguments.of(0.01, 2.5758),
      Arguments.of(0.001, 3.2905),
      Arguments.of(1e-4, 3.8906));
  }

  @ParameterizedTest
  @MethodSource
  void twoSidedZ(double alpha, double delta) {
    // tolerance: 5e-5 absolute (4 decimals)
    assertAbsolute(delta, Significance.zFromTwoSidedP(alpha), 5e-5, "delta(alpha)");
  }

  // z-far-tail.csv: [C] mpmath 50 digits, generate_fixtures.py (includes p = 1e-300 and the smallest subnormal).
  static Stream<Arguments> farTail() {
    return Fixtures.rows("z-far-tail.csv").stream().map(r -> Arguments.of(r[0], r[1]));
  }

  @ParameterizedTest
  @MethodSource
  void farTail(double p, double z) {
    // tolerance: 1e-13 relative in Z
    assertRelative(z, Significance.zFromP(p), 1e-13, "Z(p=" + p + ")");
    if (p > 1e-300) {
      // tolerance: 1e-12 relative in p (p' is steep in Z: dp/p = Z dZ)
      assertRelative(p, Significance.pFromZ(z), 1e-12, "p(Z)");
    }
  }

  @Test
  void edgeCases() {
    assertEquals(Double.POSITIVE_INFINITY, Significance.zFromP(0));
    assertEquals(Double.NEGATIVE_INFINITY, Significance.zFromP(1));
    assertEquals(0.0, Significance.zFromP(0.5), 0.0);
    assertTrue(Significance.zFromP(0.7) < 0);
    // symmetry Z(1-p) = -Z(p): exact identity of the normal distribution; tolerance 1e-15 absolute
    assertAbsolute(-Significance.zFromP(0.3), Significance.zFromP(0.7), 1e-15, "symmetry");
    assertEquals(0.0, Significance.pFromZ(Double.POSITIVE_INFINITY));
    assertEquals(1.0, Significance.pFromZ(Double.NEGATIVE_INFINITY));
    assertEquals(0.0, Significance.zFromTwoSidedP(1), 0.0);
    assertEquals(1.0, Significance.twoSidedPFromZ(0), 0.0);
    assertThrows(InferenceArgumentException.class, () -> Significance.zFromP(-1e-3));
    assertThrows(InferenceArgumentException.class, () -> Significance.zFromP(1.5));
    assertThrows(InferenceArgumentException.class, () -> Significance.zFromP(Double.NaN));
    assertThrows(InferenceArgumentException.class, () -> Significance.pFromZ(Double.NaN));
    final InferenceArgumentException e =
      assertThrows(InferenceArgumentException.class, () -> Significance.zFromP(2));
    assertTrue(e.getMessage().contains("p-value") && e.getMessage().contains("2.0"), e.getMessage());
  }
}
