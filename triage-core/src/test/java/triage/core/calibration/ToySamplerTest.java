package triage.core.calibration;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.core.inference.ChiSquaredTail;
import triage.core.sample.InputException;

/** Toy drawing and the toy log. */
class ToySamplerTest {
  @TempDir
  Path dir;

  @Test
  void toysAreReproduciblePartitions() {
    double[] w = new double[1000];
    for (int i = 0; i < w.length; i++) {
      w[i] = 0.5 + (i % 7) * 0.1;
    }
    ToySampler.Toy a = ToySampler.draw(w, 100, 42, 3);
    ToySampler.Toy b = ToySampler.draw(w, 100, 42, 3);
    assertArrayEquals(a.observed(), b.observed());
    assertEquals(w.length, a.observed().length + a.reference().length);
    boolean[] seen = new boolean[w.length];
    for (int i : a.observed()) {
      seen[i] = true;
    }
    for (int i : a.reference()) {
      assertTrue(!seen[i], "index " + i + " is in both parts");
      seen[i] = true;
    }
    assertTrue(ToySampler.draw(w, 100, 42, 4).observed().length != a.observed().length
        || !java.util.Arrays.equals(ToySampler.draw(w, 100, 42, 4).observed(), a.observed()));
  }

  /**
   * Analytic: drawing one event (with Poisson mean small the count is mostly 0 or 1; here we keep the toys with
   * one event) picks event i with probability w_i/Σw. Pearson χ² of 4000 single draws over 4 events with weights
   * 1:2:3:4 against those probabilities, 3 degrees of freedom; fails only if p &lt; 1e-4 (seed 7).
   */
  @Test
  void singleDrawsFollowTheWeights() {
    double[] w = {1, 2, 3, 4};
    long[] counts = new long[4];
    int kept = 0;
    for (long k = 0; kept < 4000; k++) {
      ToySampler.Toy t = ToySampler.draw(w, 0.7, 7, k);
      if (t.observed().length == 1) {
        counts[t.observed()[0]]++;
        kept++;
      }
    }
    double chi2 = 0;
    for (int i = 0; i < 4; i++) {
      double e = kept * w[i] / 10;
      chi2 += (counts[i] - e) * (counts[i] - e) / e;
    }
    assertTrue(ChiSquaredTail.pValue(chi2, 3) > 1e-4, "χ² = " + chi2);
  }

  /** The toy count is Poisson: mean and variance of 400 toys' sizes at N_exp = 50 within 4 standard errors. */
  @Test
  void toySizesArePoisson() {
    double[] w = new double[2000];
    java.util.Arrays.fill(w, 1);
    double s = 0;
    double s2 = 0;
    int n = 400;
    for (long k = 0; k < n; k++) {
      int size = ToySampler.draw(w, 50, 11, k).observed().length;
      s += size;
      s2 += (double) size * size;
    }
    double mean = s / n;
    double var = s2 / n - mean * mean;
    assertEquals(50, mean, 4 * Math.sqrt(50.0 / n));
    // The variance of a sample variance of Poisson(50) is about 2·50²/n.
    assertEquals(50, var, 4 * Math.sqrt(2 * 50.0 * 50.0 / n));
    assertThrows(IllegalArgumentException.class, () -> ToySampler.draw(new double[] {1, -1}, 1, 1, 0));
  }

  @Test
  void logResumesSurvivesATornLineAndRefusesOtherSettings() throws Exception {
    Path f = dir.resolve("toys.jsonl");
    ToyLog.append(f, "abc", List.of(new ToyLog.Entry(0, 5, 10, 1.5, true, 3, 0.1)));
    ToyLog.append(f, "abc", List.of(new ToyLog.Entry(2, 6, 11, 2.5, false, 4, 0.2)));
    assertEquals(List.of(0L, 2L), List.copyOf(ToyLog.read(f, "abc").keySet()));
    Files.writeString(f, Files.readString(f) + "{\"toy\":3,\"se", java.nio.file.StandardOpenOption.TRUNCATE_EXISTING);
    assertEquals(2, ToyLog.read(f, "abc").size());
    ToyLog.append(f, "abc", List.of(new ToyLog.Entry(3, 7, 12, 3.5, true, 5, 0.3)));
    assertEquals(3.5, ToyLog.read(f, "abc").get(3L).t());
    InputException e = assertThrows(InputException.class, () -> ToyLog.read(f, "xyz"));
    assertTrue(e.getMessage().contains("other settings"), e.getMessage());
  }
}
