package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * (f) A saved-and-reloaded model has identical parameters and metadata and scores bit-identically
 * (exact comparison of raw bits); scoring is independent of the thread count.
 */
class PersistenceTest {

  @Test
  void reloadedModelScoresBitIdentically() {
    TrainingData data = SyntheticData.gaussianBump(new double[] {1.0, -0.5, 0.2}, 0.3, 6000, 600,
        40, 31L);
    FitResult fit = RatioTrainer.fit(data.withExpectedCount(650.0), FitSettings.defaults()
        .withThreads(2).withLoss(LossKind.BINARY_CROSS_ENTROPY)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(80)));
    RatioModel model = fit.model();
    String json = model.toJson();
    RatioModel back = RatioModel.fromJson(json);

    assertArrayEquals(model.parameters(), back.parameters(), 0.0);
    assertEquals(model.standardisation(), back.standardisation());
    assertEquals(Double.doubleToRawLongBits(model.outputOffset()),
        Double.doubleToRawLongBits(back.outputOffset()));
    assertEquals(model.training(), back.training());
    assertEquals(json, back.toJson());
    assertEquals(56, back.parameterCount()); // 3-5-5-1: (5·3+5) + (5·5+5) + (5+1) = 56
    assertEquals(Math.log(600.0 / 650.0), back.outputOffset(), 1e-15);

    double[] events = data.reference();
    int n = data.referenceCount();
    double[] a = model.scoreAll(events, n, 1);
    double[] b = back.scoreAll(events, n, 3);
    for (int i = 0; i < n; i++) {
      assertEquals(Double.doubleToRawLongBits(a[i]), Double.doubleToRawLongBits(b[i]));
    }
    double[] x = {0.3, -1.2, 2.0};
    assertEquals(Double.doubleToRawLongBits(model.score(x)), Double.doubleToRawLongBits(back.score(x)));
    assertEquals(Double.doubleToRawLongBits(a[7]),
        Double.doubleToRawLongBits(back.score(new double[] {events[7], events[n + 7], events[2 * n + 7]})));
    assertTrue(json.contains("\"testStatistic\""));
    assertTrue(json.contains("\"log\""));
  }

  @Test
  void rejectsForeignOrInconsistentDocuments() {
    assertThrows(IllegalArgumentException.class, () -> RatioModel.fromJson("{\"format\":\"x\"}"));
    assertThrows(IllegalArgumentException.class, () -> RatioModel.fromJson("not json"));
  }
}
