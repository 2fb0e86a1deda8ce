package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** Significances whose p-value underflows a double stay finite and right. */
class LogTailTest {
  // z-underflow.csv: [C] ln p in mpmath (60 digits) and the Z that solves ln(erfc(Z/√2)/2) = ln p, made by
  // generate_fixtures.py (section 8).
  static Stream<Arguments> underflow() {
    return Fixtures.rowsWithText("z-underflow.csv").stream()
        .map(r -> Arguments.of(r[0], Double.parseDouble(r[1]), Double.parseDouble(r[2]), Double.parseDouble(r[3]),
            Double.parseDouble(r[4]), Double.parseDouble(r[5])));
  }

  @ParameterizedTest
  @MethodSource
  void underflow(String kind, double a, double b, double sigma, double logP, double z) {
    double got;
    double gotLogP;
    switch (kind) {
      case "zbi" -> {
        got = CountingSignificance.zBiFromBackground(a, b, sigma).z();
        double tau = b / (sigma * sigma);
        gotLogP = LogTail.logRegularizedBeta(1 / (1 + tau), a, tau * b + 1);
      }
      case "poisson" -> {
        got = CountingSignificance.zBiFromBackground(a, b, 0).z();
        gotLogP = LogTail.logLowerGamma(a, b);
      }
      default -> {
        got = ChiSquaredTail.z(a, b);
        gotLogP = LogTail.logUpperGamma(b / 2, a / 2);
      }
    }
    // tolerances: ln p to 1e-13 relative (ln Γ and ln B of arguments up to 5,000 lose a few digits), Z to 1e-12
    assertEquals(logP, gotLogP, 1e-13 * Math.abs(logP), kind + " ln p");
    assertTrue(Double.isFinite(got), kind + " Z is finite");
    assertEquals(z, got, 1e-12 * z, kind + " Z");
  }

  // z-deficit.csv: [C] q = 1 − p by scipy.special.betaincc / gammaincc and Z = −scipy.stats.norm.isf(q) (SciPy
  // 1.17.1, generate_fixtures.py section 8): deficits, where p rounds to 1 and Z came out −∞.
  static Stream<Arguments> deficit() {
    return Fixtures.rowsWithText("z-deficit.csv").stream()
        .map(r -> Arguments.of(r[0], Double.parseDouble(r[1]), Double.parseDouble(r[2]), Double.parseDouble(r[3]),
            Double.parseDouble(r[5])));
  }

  @ParameterizedTest
  @MethodSource
  void deficit(String kind, double n, double b, double sigma, double z) {
    double got = CountingSignificance.zBiFromBackground(n, b, kind.equals("zbi") ? sigma : 0).z();
    // tolerance: 1e-10 relative (the complements are accurate to about 1e-14; Z amplifies little)
    assertEquals(z, got, 1e-10 * Math.abs(z), kind + " deficit Z");
  }
}
