package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class ThresholdScanTest {
  /** Every row against a direct count above its threshold, with ties on the thresholds (scores on a grid). */
  @Test
  void everyRowIsTheDirectCountAboveItsThreshold() {
    SplittableRandom r = new SplittableRandom(12);
    double[] obs = new double[900];
    double[] ref = new double[5000];
    double[] w = new double[ref.length];
    for (int i = 0; i < obs.length; i++) {
      obs[i] = Math.floor(r.nextDouble() * 40) / 10;
    }
    for (int i = 0; i < ref.length; i++) {
      ref[i] = Math.floor(r.nextDouble() * 40) / 10;
      w[i] = 0.05 + r.nextDouble() * 0.2;
    }
    double[] copy = obs.clone();
    ThresholdScan.Row[] rows = ThresholdScan.scan(obs, ref, w, 11);
    assertEquals(11, rows.length);
    for (ThresholdScan.Row row : rows) {
      long n = 0;
      for (double x : obs) {
        n += x > row.threshold() ? 1 : 0;
      }
      double b = 0;
      double b2 = 0;
      for (int i = 0; i < ref.length; i++) {
        if (ref[i] > row.threshold()) {
          b += w[i];
          b2 += w[i] * w[i];
        }
      }
      assertEquals(n, row.observed(), row.toString());
      assertEquals(b, row.expected(), 1e-12 * Math.max(1, b), row.toString());
      assertEquals(Math.sqrt(b2), row.expectedError(), 1e-12, row.toString());
    }
    // The quantile rule: the first threshold is the observed median, the input is left as it was.
    java.util.Arrays.sort(copy);
    assertEquals(copy[450], rows[0].threshold());
    assertEquals(copy[(int) (0.99 * 900)], rows[10].threshold());
    assertEquals(900, obs.length);
  }

  @Test
  void badArgumentsAreRefused() {
    assertThrows(IllegalArgumentException.class, () -> ThresholdScan.scan(new double[] {1}, new double[] {1},
        new double[] {1}, 0));
    assertThrows(IllegalArgumentException.class, () -> ThresholdScan.scan(new double[0], new double[] {1},
        new double[] {1}, 3));
  }
}
