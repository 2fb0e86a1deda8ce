package triage.core.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.math.BigDecimal;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** Checks {@link NeumaierSum} against exact sums. */
class NeumaierSumTest {
  /** Analytic: 1e100 + 1 − 1e100 = 1; plain summation gives 0 (the case Neumaier's variant adds over Kahan's). */
  @Test
  void cancellation() {
    assertEquals(1.0, NeumaierSum.of(1e100, 1.0, -1e100));
    assertEquals(0.0, 1e100 + 1.0 - 1e100);
  }

  /** Randomised: against the exact sum of the same doubles in BigDecimal, within one ulp of the result. */
  @Test
  void matchesExactSum() {
    SplittableRandom r = new SplittableRandom(3);
    for (int trial = 0; trial < 50; trial++) {
      double[] x = new double[10_000];
      BigDecimal exact = BigDecimal.ZERO;
      for (int i = 0; i < x.length; i++) {
        x[i] = (r.nextDouble() - 0.3) * Math.pow(10, r.nextInt(12));
        exact = exact.add(new BigDecimal(x[i]));
      }
      double want = exact.doubleValue();
      assertEquals(want, NeumaierSum.of(x), 2 * Math.ulp(want), "seed 3, trial " + trial);
    }
  }
}
