package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.inference.Tolerance.assertAbsolute;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class PoissonLimitsTest {

  // CHECK-VALUES.md §4 classical limits (b = 0): Review of Particle Physics Poisson-limit table layout [M], values [C].
  // columns: n, UL 90%, UL 95%, UL 99%, LL 90%, LL 95%
  static Stream<Arguments> table() {
    return Stream.of(
      Arguments.of(0, 2.3026, 2.9957, 4.6052, 0, 0),
      Arguments.of(1, 3.8897, 4.7439, 6.6384, 0.1054, 0.0513),
      Arguments.of(2, 5.3223, 6.2958, 8.4059, 0.5318, 0.3554),
      Arguments.of(3, 6.6808, 7.7537, 10.0451, 1.1021, 0.8177),
      Arguments.of(4, 7.9936, 9.1535, 11.6046, 1.7448, 1.3663),
      Arguments.of(5, 9.2747, 10.5130, 13.1085, 2.4326, 1.9701));
  }

  @ParameterizedTest
  @MethodSource
  void table(int n, double ul90, double ul95, double ul99, double ll90, double ll95) {
    // tolerance: 5e-5 absolute (4 decimals printed)
    assertAbsolute(ul90, PoissonLimits.upper(n, 0.90), 5e-5, "UL90");
    assertAbsolute(ul95, PoissonLimits.upper(n, 0.95), 5e-5, "UL95");
    assertAbsolute(ul99, PoissonLimits.upper(n, 0.99), 5e-5, "UL99");
    assertAbsolute(ll90, PoissonLimits.lower(n, 0.90), 5e-5, "LL90");
    assertAbsolute(ll95, PoissonLimits.lower(n, 0.95), 5e-5, "LL95");
  }

  @Test
  void definingEquations() {
    // P(N <= n | mu_up) = 1 - CL and P(N >= n | mu_lo) = 1 - CL (Poisson/chi-squared duality);
    // tolerance 1e-12 absolute
    for (int n = 1; n < 30; n++) {
      assertAbsolute(0.05, ClsUpperLimit.poissonCdf(n, PoissonLimits.upper(n, 0.95)), 1e-12, "upper");
      assertAbsolute(0.05, 1 - ClsUpperLimit.poissonCdf(n - 1, PoissonLimits.lower(n, 0.95)), 1e-12, "lower");
    }
    assertEquals(0.0, PoissonLimits.lower(0, 0.9));
    assertThrows(InferenceArgumentException.class, () -> PoissonLimits.upper(-1, 0.9));
    assertThrows(InferenceArgumentException.class, () -> PoissonLimits.upper(1, 0));
  }
}
