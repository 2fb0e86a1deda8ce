package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.core.inference.Tolerance.assertAbsolute;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.apache.commons.statistics.distribution.PoissonDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class ClsUpperLimitTest {

  // CHECK-VALUES.md §4 "95% CLs upper limits on s" table [C]; method "Presentation of search results: the CLs
  // technique", J. Phys. G 28 (2002) 2693.
  private static final double[] TABLE_B = {0, 0.5, 1, 2, 3, 5};
  private static final double[][] TABLE_95 = {
    {2.9957, 4.7439, 6.2958, 7.7537, 9.1535},
    {2.9957, 4.3581, 5.8156, 7.2563, 8.6538},
    {2.9957, 4.1130, 5.4100, 6.7824, 8.1594},
    {2.9957, 3.8165, 4.8237, 5.9835, 7.2407},
    {2.9957, 3.6433, 4.4432, 5.3954, 6.4804},
    {2.9957, 3.4500, 3.9999, 4.6587, 5.4346},
  };

  static Stream<Arguments> table95() {
    final List<Arguments> list = new ArrayList<>();
    for (int i = 0; i < TABLE_B.length; i++) {
      for (int n = 0; n < 5; n++) {
        list.add(Arguments.of(n, TABLE_B[i], TABLE_95[i][n]));
      }
    }
    return list.stream();
  }

  @ParameterizedTest
  @MethodSource
  void table95(int n, double b, double limit) {
    // tolerance: 5e-5 absolute (4 decimals printed)
    assertAbsolute(limit, ClsUpperLimit.withDefaults().upperLimit(n, b).upperLimit(), 5e-5,
      "CLs UL n=" + n + " b=" + b);
  }

  // CHECK-VALUES.md §4 90% CL rows [C]: b=1 and b=3, n = 0..3.
  static Stream<Arguments> table90() {
    return Stream.of(
      Arguments.of(0, 1, 2.3026), Arguments.of(1, 1, 3.2718), Arguments.of(2, 1, 4.4429),
      Arguments.of(3, 1, 5.7115), Arguments.of(0, 3, 2.3026), Arguments.of(1, 3, 2.8389),
      Arguments.of(2, 3, 3.5228), Arguments.of(3, 3, 4.3624));
  }

  @ParameterizedTest
  @MethodSource
  void table90(int n, double b, double limit) {
    // tolerance: 5e-5 absolute
    assertAbsolute(limit, ClsUpperLimit.withDefaults().withConfidenceLevel(0.90).upperLimit(n, b).upperLimit(),
      5e-5, "90% CLs UL");
  }

  // cls-known-background.csv: [C] scipy gammaincc + brentq at full precision (generate_fixtures.py).
  static Stream<Arguments> fullPrecision() {
    return Fixtures.rows("cls-known-background.csv").stream()
      .map(r -> Arguments.of((int) r[0], r[1], r[2], r[3]));
  }

  @ParameterizedTest
  @MethodSource
  void fullPrecision(int n, double b, double cl, double limit) {
    final ClsUpperLimit.Result r = ClsUpperLimit.withDefaults().withConfidenceLevel(cl).upperLimit(n, b);
    // tolerance: 1e-9 relative (root solved to 1e-10 absolute)
    assertRelative(limit, r.upperLimit(), 1e-9, "CLs UL");
    assertAbsolute(1 - cl, r.clsAtLimit(), 1e-9, "CLs at limit");
  }

  @Test
  void zeroObservedIsLn20() {
    // CHECK-VALUES.md §4: n_obs = 0 gives CLs = e^-s for any b, s_up = ln 20 = 2.9957 (closed form)
    for (final double b : new double[] {0, 0.1, 3, 100}) {
      assertRelative(Math.log(20), ClsUpperLimit.withDefaults().upperLimit(0, b).upperLimit(), 1e-15, "ln 20");
      assertRelative(Math.exp(-1.7), ClsUpperLimit.cls(1.7, 0, b), 1e-13, "CLs = e^-s");
    }
  }

  @Test
  void classicalAtZeroBackgroundAndNegativeClassicalContrast() {
    // b = 0: CLs equals the classical upper limit (CHECK-VALUES.md §4, b=0 row equals the UL 95% column)
    for (int n = 0; n < 6; n++) {
      assertRelative(PoissonLimits.upper(n, 0.95), ClsUpperLimit.withDefaults().upperLimit(n, 0).upperLimit(),
        1e-9, "b=0");
    }
    // CHECK-VALUES.md §4 [C]: classical mu_up - b for b=3, n=0 at 95% is -0.0043, while CLs stays positive
    assertAbsolute(-0.0043, PoissonLimits.upper(0, 0.95) - 3, 5e-5, "negative classical");
    assertTrue(ClsUpperLimit.withDefaults().upperLimit(0, 3).upperLimit() > 0);
  }

  @Test
  void largeBackgroundLogSpace() {
    // CL_b underflows for b = 1000 (P(N <= 1 | 1000) ~ 1e-431), so the log-space branch is used; it must
    // equal the closed form CLs(s) = e^-s (sum_k (s+b)^k/k!)/(sum_k b^k/k!), for n = 1
    // e^-s (1 + s + b)/(1 + b). Tolerance 1e-13 relative.
    final double s = 0.5;
    final double b = 1000;
    assertRelative(Math.exp(-s) * (1 + s + b) / (1 + b), ClsUpperLimit.cls(s, 1, b), 1e-13, "log-space n=1");
  }

  // cls-gaussian-background.csv: [C] scipy.integrate.quad of the truncated-Gaussian-averaged CLs (hybrid,
  // Cousins–Highland, Nucl. Instrum. Meth. A 320 (1992) 331), brentq (generate_fixtures.py).
  static Stream<Arguments> gaussianBackground() {
    return Fixtures.rows("cls-gaussian-background.csv").stream()
      .map(r -> Arguments.of((int) r[0], r[1], r[2], r[3], r[4]));
  }

  @ParameterizedTest
  @MethodSource
  void gaussianBackground(int n, double b, double sigma, double cl, double limit) {
    // tolerance: 1e-7 relative (Simpson integration with 2048 intervals, root tolerance 1e-10)
    assertRelative(limit, ClsUpperLimit.withDefaults().withConfidenceLevel(cl).upperLimit(n, b, sigma)
      .upperLimit(), 1e-7, "hybrid CLs UL");
  }

  @Test
  void gaussianBackgroundTendsToKnown() {
    // sigma_b -> 0: the averaged limit tends to the known-b limit (continuity; tolerance 1e-6 relative)
    final double known = ClsUpperLimit.withDefaults().upperLimit(3, 2).upperLimit();
    assertRelative(known, ClsUpperLimit.withDefaults().upperLimit(3, 2, 1e-3).upperLimit(), 1e-6, "sigma->0");
    assertEquals(known, ClsUpperLimit.withDefaults().upperLimit(3, 2, 0).upperLimit(), 0.0);
  }

  @Test
  void coverageIsConservative() {
    // The CLs paper (J. Phys. G 28 (2002) 2693): CLs over-covers, P(s_true excluded | s_true) <= 1 - CL.
    // Computed exactly by summing the Poisson probabilities of every n_obs whose limit is below s_true (no
    // randomness). Bound: 0.05 + 1e-12.
    final ClsUpperLimit cls = ClsUpperLimit.withDefaults();
    for (final double b : new double[] {0.5, 3}) {
      final double[] limits = new double[80];
      for (int n = 0; n < limits.length; n++) {
        limits[n] = cls.upperLimit(n, b).upperLimit();
      }
      for (final double s : new double[] {1, 3, 5, 10}) {
        final PoissonDistribution pois = PoissonDistribution.of(s + b);
        double excluded = 0;
        for (int n = 0; n < limits.length; n++) {
          if (limits[n] < s) {
            excluded += pois.probability(n);
          }
        }
        assertTrue(excluded <= 0.05 + 1e-12, "exclusion rate " + excluded + " at s=" + s + " b=" + b);
      }
    }
  }

  @Test
  void edgeCases() {
    assertThrows(InferenceArgumentException.class, () -> ClsUpperLimit.withDefaults().withConfidenceLevel(1));
    assertThrows(InferenceArgumentException.class, () -> ClsUpperLimit.withDefaults().upperLimit(-1, 1));
    assertThrows(InferenceArgumentException.class, () -> ClsUpperLimit.withDefaults().upperLimit(1, -1));
    assertThrows(InferenceArgumentException.class, () -> ClsUpperLimit.cls(Double.NaN, 1, 1));
    final ClsUpperLimit.Result r = ClsUpperLimit.withDefaults().upperLimit(2, 1);
    assertTrue(r.excludes(r.upperLimit() + 1e-6));
    assertEquals(0.95, r.confidenceLevel());
    assertEquals(1.0, ClsUpperLimit.cls(0, 3, 2), 1e-15);
  }
}
