package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.ranking.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class WeightedWassersteinTest {
  private static final WeightedWasserstein W = WeightedWasserstein.withDefaults();

  // CHECK-VALUES.md §9 W1 table.
  static Stream<Arguments> checkValues() {
    return Stream.of(
      // [Q] scipy wasserstein_distance docstring: [0,1,3] vs [5,6,8] -> 5.0
      Arguments.of(new double[] {0, 1, 3}, null, new double[] {5, 6, 8}, null, 5.0, 1e-15),
      // [Q] scipy docstring: values [0,1] weights [3,1] vs weights [2,2] -> 0.25
      Arguments.of(new double[] {0, 1}, new double[] {3, 1}, new double[] {0, 1}, new double[] {2, 2}, 0.25,
        1e-15),
      // [Q] scipy docstring 4.0781331438047861 and [C] 4.078133143804785; tolerance 1e-14 relative
      Arguments.of(new double[] {3.4, 3.9, 7.5, 7.8}, new double[] {1.4, 0.9, 3.1, 7.2},
        new double[] {4.5, 1.4}, new double[] {3.2, 3.5}, 4.0781331438047861, 1e-14),
      // [C] [0,2] vs [1] -> 1.0
      Arguments.of(new double[] {0, 2}, null, new double[] {1}, null, 1.0, 1e-15),
      // [C] [0,0,1] vs [0,1,1] -> 1/3
      Arguments.of(new double[] {0, 0, 1}, null, new double[] {0, 1, 1}, null, 1.0 / 3, 1e-15));
  }

  @ParameterizedTest
  @MethodSource
  void checkValues(double[] x, double[] wx, double[] y, double[] wy, double w1, double tol) {
    assertRelative(w1, W.statistic(x, wx, y, wy), tol, "W1");
    // symmetric
    assertRelative(w1, W.statistic(y, wy, x, wx), tol, "W1 symmetric");
  }

  static Stream<Cases.Case> fixture() {
    return Cases.all().stream();
  }

  @ParameterizedTest
  @MethodSource
  void fixture(Cases.Case c) {
    // two-sample-cases.txt [C]: scipy.stats.wasserstein_distance with weights; numpy weighted population sd.
    // Tolerance 1e-13 relative.
    assertRelative(c.scalar("w1"), W.statistic(c.get("x"), c.get("wx"), c.get("y"), c.get("wy")), 1e-13,
      "W1 " + c);
    assertRelative(c.scalar("ref_sd"), W.referenceStandardDeviation(c.get("y"), c.get("wy")), 1e-13, "sd " + c);
    assertRelative(c.scalar("w1") / c.scalar("ref_sd"),
      W.with(WeightedWasserstein.Units.REFERENCE_STANDARD_DEVIATION).statistic(c.get("x"), c.get("wx"),
        c.get("y"), c.get("wy")), 1e-13, "W1/sd " + c);
  }

  @Test
  void nistStandardDeviation() {
    // StRD NumAcc1 and NumAcc3 [Q] (CHECK-VALUES.md §5): certified s (denominator n-1) = 1 and 0.1; the
    // population form used here is s sqrt((n-1)/n). Tolerances: 1e-14 relative for NumAcc1; 1e-7 relative for
    // NumAcc3 (decimal inputs not representable, CHECK-VALUES.md §5 suggestion).
    assertRelative(Math.sqrt(2.0 / 3), W.referenceStandardDeviation(
      new double[] {10000001, 10000003, 10000002}, null), 1e-14, "NumAcc1");
    final double[] y = new double[1001];
    y[0] = 1000000.2;
    for (int i = 0; i < 500; i++) {
      y[1 + 2 * i] = 1000000.1;
      y[2 + 2 * i] = 1000000.3;
    }
    assertRelative(0.1 * Math.sqrt(1000.0 / 1001), W.referenceStandardDeviation(y, null), 1e-7, "NumAcc3");
  }

  @Test
  void edgeCases() {
    final double[] x = {1, 2, 3};
    assertEquals(0.0, W.statistic(x, x), 0.0);
    assertThrows(RankingArgumentException.class,
      () -> W.with(WeightedWasserstein.Units.REFERENCE_STANDARD_DEVIATION).statistic(x, new double[] {4, 4}));
    assertThrows(RankingArgumentException.class, () -> W.statistic(x, new double[] {Double.POSITIVE_INFINITY}));
    assertThrows(RankingArgumentException.class, () -> W.statistic(x, null, x, new double[] {1, -1, 1}));
    // ALLOW: signed reference weights (1, -0.5, 1.5) at (1, 2, 3), total 2, G = (0.5, 0.25, 1); observed
    // {1, 2, 3} F = (1/3, 2/3, 1): W1 = |1/3 - 1/2| + |2/3 - 1/4| = 7/12 (hand computation)
    assertRelative(7.0 / 12, W.with(NegativeWeights.ALLOW).statistic(x, null, x, new double[] {1, -0.5, 1.5}),
      1e-15, "signed W1");
  }
}
