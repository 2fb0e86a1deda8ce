package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class EmpiricalPValueTest {

  @Test
  void estimators() {
    final double[] toys = {0.5, 1.5, 2.5, 3.5, 4.5, 5.5, 6.5, 7.5, 8.5, 9.5};
    // k = #{t >= 7} = 3 of N = 10 (hand count): (k+1)/(N+1) = 4/11, k/N = 3/10
    assertEquals(3, EmpiricalPValue.statistic(toys, 7));
    final EmpiricalPValue.Result plusOne = EmpiricalPValue.withDefaults().test(toys, 7);
    assertEquals(4.0 / 11, plusOne.pValue(), 0.0);
    assertEquals(EmpiricalPValue.Bound.ESTIMATE, plusOne.bound());
    final EmpiricalPValue.Result ratio = EmpiricalPValue.withDefaults().with(PValueEstimator.RATIO).test(toys, 7);
    assertEquals(0.3, ratio.pValue(), 0.0);
    // binomial standard error sqrt(0.3 0.7 / 10) (formula); tolerance 1e-15 relative
    assertRelative(Math.sqrt(0.021), ratio.standardError(), 1e-15, "se");
    assertEquals(Significance.zFromP(0.3), ratio.z(), 0.0);
    // ties count as exceedances
    assertEquals(4, EmpiricalPValue.statistic(toys, 6.5));
  }

  @Test
  void zeroExceedancesIsABound() {
    // k = 0: honest bound p < 1/N, Z > Phi^-1(1 - 1/N), for either estimator
    final double[] toys = new double[1000];
    for (final PValueEstimator e : PValueEstimator.values()) {
      final EmpiricalPValue.Result r = EmpiricalPValue.withDefaults().with(e).test(toys, 1);
      assertEquals(EmpiricalPValue.Bound.UPPER_BOUND, r.bound());
      assertEquals(1e-3, r.pValue(), 0.0);
      // CHECK-VALUES.md §1 [C]: Phi^-1(1 - 0.001) = 3.0902323062; tolerance 1e-10 absolute
      assertEquals(3.0902323062, r.z(), 1e-10);
      assertEquals(0.0, r.lower());
      // N = 100: p < 0.01, Z > 2.33 (common practice, no source); Phi^-1(0.99) = 2.3263478740408408 computed with
      // SciPy 1.17.1 (scipy.stats.norm.isf(0.01)); tolerance 1e-10 absolute
      final EmpiricalPValue.Result hundred = EmpiricalPValue.withDefaults().with(e).test(new double[100], 1);
      assertEquals(EmpiricalPValue.Bound.UPPER_BOUND, hundred.bound());
      assertEquals(0.01, hundred.pValue(), 0.0);
      assertEquals(2.3263478740, hundred.z(), 1e-10);
    }
  }

  // clopper-pearson.csv: [C] scipy.stats.beta.ppf/isf (generate_fixtures.py); Biometrika 26 (1934) 404.
  static Stream<Arguments> clopperPearson() {
    return Fixtures.rows("clopper-pearson.csv").stream()
      .map(r -> Arguments.of((int) r[0], (int) r[1], r[2], r[3], r[4]));
  }

  @ParameterizedTest
  @MethodSource
  void clopperPearson(int k, int n, double confidence, double lower, double upper) {
    final EmpiricalPValue.Result r = EmpiricalPValue.withDefaults().withIntervalConfidence(confidence)
      .fromCounts(k, n);
    // tolerance: 1e-12 relative
    assertRelative(lower, r.lower(), 1e-12, "lower");
    assertRelative(upper, r.upper(), 1e-12, "upper");
  }

  @Test
  void clopperPearsonClosedForms() {
    // k = 0: upper = 1 - (a/2)^(1/N); k = N: lower = (a/2)^(1/N) (closed forms of the beta quantiles);
    // tolerance 1e-13 relative
    final EmpiricalPValue e = EmpiricalPValue.withDefaults().withIntervalConfidence(0.95);
    assertRelative(1 - Math.pow(0.025, 1.0 / 50), e.fromCounts(0, 50).upper(), 1e-13, "k=0");
    assertRelative(Math.pow(0.025, 1.0 / 50), e.fromCounts(50, 50).lower(), 1e-13, "k=N");
    assertEquals(1.0, e.fromCounts(50, 50).upper());
  }

  @Test
  void edgeCases() {
    assertThrows(InferenceArgumentException.class, () -> EmpiricalPValue.withDefaults().test(new double[0], 1));
    assertThrows(InferenceArgumentException.class,
      () -> EmpiricalPValue.withDefaults().test(new double[] {Double.NaN}, 1));
    assertThrows(InferenceArgumentException.class, () -> EmpiricalPValue.withDefaults().fromCounts(3, 2));
    assertThrows(InferenceArgumentException.class, () -> EmpiricalPValue.withDefaults().with(null));
    assertThrows(InferenceArgumentException.class,
      () -> EmpiricalPValue.withDefaults().withIntervalConfidence(Double.NaN));
    final double[] inf = {Double.POSITIVE_INFINITY, 1};
    assertEquals(1, EmpiricalPValue.statistic(inf, Double.POSITIVE_INFINITY));
  }
}
