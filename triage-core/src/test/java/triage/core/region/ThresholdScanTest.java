package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

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

  @Test
  void aRowWithoutAPositiveExpectationSaysWhy() {
    // Observed scores 0..199, reference 0..119 of weight 1 and two events at 150 of weights 1 and −2: above 119 the
    // reference holds only the pair at 150 (Σw = −1, Σw² = 5), above 150 nothing (by hand). The 0.99 quantile,
    // the last threshold, is 198: nothing expected; a threshold in (119, 150) sees Σw = −1; the median, 100, has
    // the 19 events 101..119 plus the pair, Σw = 18.
    double[] obs = new double[200];
    for (int i = 0; i < 200; i++) {
      obs[i] = i;
    }
    double[] ref = new double[122];
    double[] w = new double[122];
    for (int j = 0; j < 120; j++) {
      ref[j] = j;
      w[j] = 1;
    }
    ref[120] = 150;
    w[120] = 1;
    ref[121] = 150;
    w[121] = -2;
    ThresholdScan.Row[] rows = ThresholdScan.scan(obs, ref, w, 50);
    assertEquals(100, rows[0].threshold());
    assertEquals(18, rows[0].expected(), 1e-12);
    assertNull(rows[0].noSignificance());
    ThresholdScan.Row last = rows[rows.length - 1];
    assertEquals(198, last.threshold());
    assertEquals(0, last.expected());
    assertTrue(last.noSignificance().startsWith("no reference weight lies above the threshold"), last.toString());
    ThresholdScan.Row negative = java.util.Arrays.stream(rows).filter(r -> r.threshold() > 119 && r.threshold() < 150)
        .findFirst().orElseThrow();
    assertEquals(-1, negative.expected(), 1e-12);
    assertTrue(negative.noSignificance().startsWith("the reference weights above the threshold sum to zero or less"),
        negative.toString());
  }
}
