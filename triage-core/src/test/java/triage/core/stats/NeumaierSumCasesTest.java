package triage.core.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class NeumaierSumCasesTest {

  @Test
  void cancellation() {
    // [1, 1e100, 1, -1e100] sums to 2 exactly; plain summation gives 0 (classic example of the Neumaier
    // improvement over Kahan, common practice, no source)
    assertEquals(2.0, NeumaierSum.of(new double[] {1, 1e100, 1, -1e100}), 0.0);
    // 0.1 added 10 times: the compensated sum is the double nearest to 1 (= 1.0), plain gives 0.9999999999999999
    final double[] tenths = new double[10];
    java.util.Arrays.fill(tenths, 0.1);
    assertEquals(1.0, NeumaierSum.of(tenths), 0.0);
    assertEquals(0.0, NeumaierSum.of(new double[0]));
    assertTrue(Double.isNaN(NeumaierSum.create().add(1).add(Double.NaN).value()));
    assertEquals(Double.POSITIVE_INFINITY, NeumaierSum.create().add(1).add(Double.POSITIVE_INFINITY).value());
  }

  @Test
  void nistNumAcc4Mean() {
    // StRD NumAcc4 [Q]: 10000000.2, then 500 x (10000000.1, 10000000.3); certified mean 10000000.2.
    // Tolerance: relative 1e-15 (the decimal inputs are not representable; CHECK-VALUES.md §5)
    final double[] y = new double[1001];
    y[0] = 10000000.2;
    for (int i = 0; i < 500; i++) {
      y[1 + 2 * i] = 10000000.1;
      y[2 + 2 * i] = 10000000.3;
    }
    assertEquals(10000000.2, NeumaierSum.of(y) / y.length, 1e-15 * 10000000.2);
    // sum of squares of (1, 2, 2) is 9 (hand computation)
    assertEquals(9.0, NeumaierSum.ofSquares(new double[] {1, 2, 2}), 0.0);
  }
}
