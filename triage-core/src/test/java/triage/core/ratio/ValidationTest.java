package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.OptionalDouble;
import org.junit.jupiter.api.Test;

/**
 * Validation of the value types, the weighted standardisation (against the closed-form moments
 * of small hand-made samples), the parameter layout and the bounded training log.
 */
class ValidationTest {

  @Test
  void trainingDataRejectsBadInput() {
    List<String> one = List.of("x");
    assertThrows(IllegalArgumentException.class,
        () -> TrainingData.of(one, new double[] {1, Double.NaN}, new double[] {1, 1}, new double[] {0}));
    assertThrows(IllegalArgumentException.class,
        () -> TrainingData.of(one, new double[] {1, 2, 3}, new double[] {1, 1}, new double[] {0}));
    assertThrows(IllegalArgumentException.class,
        () -> TrainingData.of(one, new double[] {1, 2}, new double[] {1, -1}, new double[] {0}));
    assertThrows(IllegalArgumentException.class,
        () -> TrainingData.of(List.of("a", "a"), new double[] {1, 2}, new double[] {1}, new double[] {0, 0}));
    assertThrows(IllegalArgumentException.class,
        () -> TrainingData.of(one, new double[] {1}, new double[] {1}, new double[0]));
    // negative weights accepted when flagged, as long as the sum is positive
    TrainingData ok = new TrainingData(one, new double[] {1, 2}, new double[] {2, -1},
        new double[] {0}, WeightPolicy.ALLOW_NEGATIVE, OptionalDouble.empty());
    assertEquals(2, ok.referenceCount());
    assertThrows(IllegalArgumentException.class, () -> new TrainingData(one, new double[] {1, 2},
        new double[] {1, -1}, new double[] {0}, WeightPolicy.ALLOW_NEGATIVE, OptionalDouble.empty()));
    assertThrows(IllegalArgumentException.class, () -> ok.withExpectedCount(-3));
    // float input is widened exactly
    TrainingData f = TrainingData.ofFloats(one, new float[] {0.1f, 2f}, new float[] {1f, 1f}, new float[] {3f});
    assertEquals((double) 0.1f, f.reference()[0], 0.0);
  }

  @Test
  void settingsValidateAndCopy() {
    FitSettings d = FitSettings.defaults();
    assertThrows(IllegalArgumentException.class, () -> d.withClip(0));
    // a clip so small that the network is constant is a slip (it used to "converge" at once with t = 0)
    assertThrows(IllegalArgumentException.class, () -> d.withClip(1e-320));
    assertThrows(IllegalArgumentException.class, () -> d.withClip(Math.nextDown(FitSettings.MIN_CLIP)));
    assertEquals(FitSettings.MIN_CLIP, d.withClip(FitSettings.MIN_CLIP).clip(), 0.0);
    assertThrows(IllegalArgumentException.class, () -> d.withThreads(0));
    assertThrows(IllegalArgumentException.class, () -> d.withHiddenWidths(List.of(5, 0)));
    assertThrows(IllegalArgumentException.class, () -> d.withRestarts(0));
    assertThrows(IllegalArgumentException.class, () -> new StoppingRule(0, 1e-9, 10, 1e-3));
    assertEquals(3.0, d.withClip(3.0).clip(), 0.0);
    assertEquals(9.0, d.clip(), 0.0); // original untouched
  }

  @Test
  void weightedStandardisationMatchesClosedForm() {
    // values {1, 2, 4} with weights {1, 2, 1}: mean = (1 + 4 + 4)/4 = 2.25,
    // var = (1.5625 + 2·0.0625 + 3.0625)/4 = 1.1875 (population form), by hand.
    Standardisation s = Standardisation.weighted(new double[] {1, 2, 4}, new double[] {1, 2, 1}, 1);
    assertEquals(2.25, s.meanAt(0), 1e-15);
    assertEquals(Math.sqrt(1.1875), s.stdAt(0), 1e-15);
    // large offset: 1e9 + {−1, +1}, equal weights → mean 1e9, std 1 exactly (analytic);
    // the naive E[x²] − E[x]² formula loses every digit here.
    Standardisation big = Standardisation.weighted(new double[] {1e9 - 1, 1e9 + 1},
        new double[] {0.3, 0.3}, 1);
    assertEquals(1e9, big.meanAt(0), 0.0);
    assertEquals(1.0, big.stdAt(0), 1e-12);
    // constant feature: std set to 1
    assertEquals(1.0, Standardisation.weighted(new double[] {5, 5}, new double[] {1, 1}, 1).stdAt(0), 0.0);
  }

  @Test
  void parameterLayout() {
    // d-5-5-1: (5d + 5) + 30 + 6 parameters (counted by hand)
    assertEquals(46, new Architecture(1, List.of(5, 5), Activation.SIGMOID).parameterCount());
    assertEquals(66, new Architecture(5, List.of(5, 5), Activation.SIGMOID).parameterCount());
    assertEquals(4, new Architecture(3, List.of(), Activation.SIGMOID).parameterCount());
    Architecture a = new Architecture(2, List.of(3), Activation.TANH);
    assertEquals(0, a.weightOffset(1));
    assertEquals(6, a.biasOffset(1));
    assertEquals(9, a.weightOffset(2));
    assertEquals(12, a.biasOffset(2));
  }

  @Test
  void initialisationIsGlorotUniformAndClipped() {
    Architecture arch = new Architecture(4, List.of(6), Activation.SIGMOID);
    double[] t = RatioTrainer.initialParameters(arch, 7L, 9.0);
    double a1 = Math.sqrt(6.0 / (4 + 6));
    for (int i = 0; i < 24; i++) {
      assertTrue(Math.abs(t[i]) <= a1);
    }
    for (int i = 24; i < 30; i++) {
      assertEquals(0.0, t[i], 0.0); // biases start at zero
    }
    assertArrayEquals(t, RatioTrainer.initialParameters(arch, 7L, 9.0), 0.0);
    for (double v : RatioTrainer.initialParameters(arch, 7L, 0.1)) {
      assertTrue(Math.abs(v) <= 0.1);
    }
  }

  @Test
  void trainingLogStaysBounded() {
    var rec = new TrainingLog.Recorder(16);
    for (int i = 0; i <= 1000; i++) {
      rec.offer(i, -i, 1.0 / (i + 1));
    }
    TrainingLog log = rec.finish();
    assertTrue(log.entries().size() <= 16, "size " + log.entries().size());
    assertEquals(0, log.entries().get(0).iteration());
    assertEquals(1000, log.entries().get(log.entries().size() - 1).iteration());
    for (int i = 1; i < log.entries().size(); i++) {
      assertTrue(log.entries().get(i).iteration() > log.entries().get(i - 1).iteration());
    }
  }
}
