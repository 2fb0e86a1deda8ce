package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class OneSampleKolmogorovSmirnovTestTest {

  @Test
  void statisticByHand() {
    // x = {0.1, 0.5, 0.9} against U(0,1): max(i/n - F, F - (i-1)/n) over i: {0.2333, 0.1667, 0.1} and
    // {0.1, 0.1667, 0.2333} -> D = 0.9 - 2/3 = 0.23333 (hand computation); tolerance 1e-15 relative
    final double d = OneSampleKolmogorovSmirnovTest.withDefaults().statistic(new double[] {0.9, 0.1, 0.5},
      x -> x);
    assertRelative(1.0 / 3 - 0.1, d, 1e-14, "D");
  }

  @Test
  void againstScipyKstest() {
    // chi2-fit-expected.csv: [C] scipy.stats.kstest(data, chi2(dof).cdf, method='exact') on the 400 draws of
    // chi2-fit-sample.csv; tolerance 1e-12 relative in D
    final double[] data = Fixtures.column("chi2-fit-sample.csv");
    final double[] expected = Fixtures.rows("chi2-fit-expected.csv").get(0);
    final ChiSquaredDistribution chi2 = ChiSquaredDistribution.of(expected[1]);
    final OneSampleKolmogorovSmirnovTest.Result r =
      OneSampleKolmogorovSmirnovTest.withDefaults().test(data, chi2::cumulativeProbability);
    assertRelative(expected[3], r.statistic(), 1e-12, "D");
    // kstest's 'exact' switches to Pelz–Good above n = 140 (tolerance 1e-6 relative); the exact Durbin
    // matrix value of scipy's private _kolmogn_DMTW is column 5 (tolerance 1e-10 relative)
    assertRelative(expected[4], r.pValue(), 1e-6, "p kstest");
    assertRelative(expected[5], r.pValue(), 1e-10, "p exact");
    assertEquals(OneSampleKolmogorovSmirnovTest.PValueMethod.EXACT, r.method());
  }

  // kolmogorov-one-sample-large.csv: [C] exact P(D_n >= d) from scipy's private Durbin matrix routine
  // _kolmogn_DMTW for n = 1500..10000, compared with the Stephens form used by AUTO above n = 1000.
  static Stream<Arguments> stephensLargeN() {
    return Fixtures.rows("kolmogorov-one-sample-large.csv").stream()
      .map(r -> Arguments.of((int) r[0], r[1], r[3]));
  }

  @ParameterizedTest
  @MethodSource
  void stephensLargeN(int n, double d, double sf) {
    // Stephens correction (J. R. Stat. Soc. B 32 (1970) 115); tolerance 6e-3 relative for p in [0.01, 0.9]
    // (observed 4.3e-3 at n=1500)
    final double sqrtN = Math.sqrt(n);
    assertRelative(sf, KolmogorovDistribution.survival((sqrtN + 0.12 + 0.11 / sqrtN) * d), 6e-3,
      "Stephens n=" + n);
  }

  @Test
  void methodsAndEdgeCases() {
    final double[] x = {0.05, 0.2, 0.33, 0.5, 0.61, 0.74, 0.9};
    final OneSampleKolmogorovSmirnovTest ks = OneSampleKolmogorovSmirnovTest.withDefaults();
    final double d = ks.statistic(x, v -> v);
    assertEquals(KolmogorovDistribution.survival(Math.sqrt(7) * d),
      ks.with(OneSampleKolmogorovSmirnovTest.PValueMethod.ASYMPTOTIC).test(x, v -> v).pValue(), 0.0);
    assertEquals(KolmogorovDistribution.oneSampleSurvival(d, 7),
      ks.with(OneSampleKolmogorovSmirnovTest.PValueMethod.EXACT).test(x, v -> v).pValue(), 0.0);
    assertTrue(!ks.test(x, v -> v).reject(0.05));
    assertThrows(InferenceArgumentException.class, () -> ks.statistic(x, v -> 2 * v));
    assertThrows(InferenceArgumentException.class, () -> ks.statistic(new double[0], v -> v));
    assertThrows(InferenceArgumentException.class, () -> ks.with(null));
  }
}
