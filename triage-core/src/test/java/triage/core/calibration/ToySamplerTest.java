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
    // zero and negative weights are an input error that names them and says why (drawing ∝ weight)
    var e = assertThrows(triage.core.sample.InputException.class,
        () -> ToySampler.draw(new double[] {1, -1, 0, -2}, 1, 1, 0));
    assertTrue(e.getMessage().contains("this reference has 2 negative and 1 zero weights (the first: w = -1.0)"),
        e.getMessage());
    assertTrue(e.getMessage().contains("probability proportional to weight"), e.getMessage());
  }

  /**
   * Null toys from a reference of two weight classes (90,000 events of weight 0.01 and 10,000 of weight 0.1, so the
   * heavy class carries 1000/1900 = 0.5263 of the weight; analytic). With N_exp = 1,900 a toy takes about 2% of the
   * events. Over 200 toys the heavy class's share of the toy events, and its share of the toy reference's corrected
   * weight, must both be 0.5263 within 0.004 (the per-toy spread of the first is about 0.011, so its mean over 200
   * toys has a standard error of 0.0008; the second barely fluctuates). Successive sampling gave 0.516 and 0.503.
   */
  @Test
  void toysAreNullSamplesWhenWeightsDiffer() {
    int light = 90_000;
    int heavy = 10_000;
    double[] w = new double[light + heavy];
    for (int i = 0; i < w.length; i++) {
      w[i] = i < light ? 0.01 : 0.1;
    }
    double expectedShare = 1000.0 / 1900;
    double obsShare = 0;
    double refShare = 0;
    int toys = 200;
    for (long k = 0; k < toys; k++) {
      ToySampler.Toy t = ToySampler.draw(w, 1900, 5, k);
      long h = java.util.Arrays.stream(t.observed()).filter(i -> i >= light).count();
      obsShare += h / (double) t.observed().length / toys;
      double all = 0;
      double hw = 0;
      for (int j = 0; j < t.reference().length; j++) {
        all += t.referenceWeights()[j];
        hw += t.reference()[j] >= light ? t.referenceWeights()[j] : 0;
      }
      refShare += hw / all / toys;
    }
    assertEquals(expectedShare, obsShare, 0.004);
    assertEquals(expectedShare, refShare, 0.004);
  }

  /** An event heavy enough to be in every toy is refused with a message (it would be a built-in excess). */
  @Test
  void anEventInEveryToyIsRefused() {
    double[] w = new double[100];
    java.util.Arrays.fill(w, 0.01);
    w[0] = 50;
    assertThrows(InputException.class, () -> ToySampler.draw(w, 20, 1, 0));
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
