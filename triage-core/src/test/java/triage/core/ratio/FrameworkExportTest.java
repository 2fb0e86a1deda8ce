package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The side-by-side export holds the problem the engine minimises: the extended loss recomputed
 * from the exported arrays by a plain, independent forward pass (Math.exp, no kernels) at the
 * exported starting point equals the engine's loss at iteration 0, and the file sizes and the
 * trajectory match the fit.
 */
class FrameworkExportTest {

  @Test
  void exportedProblemGivesTheEnginesStartingLoss(@TempDir Path dir) throws IOException {
    TrainingData data = SyntheticData.gaussianBump(new double[] {1.0, -0.5}, 0.3, 3000, 300, 30, 5L);
    FitSettings settings = FitSettings.defaults().withThreads(1)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(30));
    FrameworkExport.Trajectory trajectory = new FrameworkExport.Trajectory();
    FitResult fit = RatioTrainer.fit(data, settings, trajectory);
    FrameworkExport.write(dir, "case", data, settings, fit, trajectory);

    JsonNode meta = new ObjectMapper().readTree(dir.resolve("case.json").toFile());
    int d = meta.get("features").asInt();
    int m = meta.get("referenceEvents").asInt() + meta.get("observedEvents").asInt();
    int p = meta.get("parameters").asInt();
    assertEquals(2, d);
    assertEquals(3300, m);
    assertEquals(51, p); // 2-5-5-1: (5·2+5) + (5·5+5) + (5+1) = 51
    ByteBuffer raw = ByteBuffer.wrap(Files.readAllBytes(dir.resolve("case.f64")))
        .order(ByteOrder.LITTLE_ENDIAN);
    assertEquals(8L * (d * m + 2L * m + p), raw.capacity());
    double[] all = new double[raw.capacity() / 8];
    raw.asDoubleBuffer().get(all);

    double loss = 0;
    for (int e = 0; e < m; e++) {
      double[] in = {all[e], all[m + e]};
      double[] h1 = layer(all, d * m + 2 * m, in, 5, true);
      double[] h2 = layer(all, d * m + 2 * m + 15, h1, 5, true);
      double f = layer(all, d * m + 2 * m + 45, h2, 1, false)[0];
      loss += all[d * m + e] * (Math.exp(f) - 1.0) - all[d * m + m + e] * f;
    }
    double t0 = meta.get("trajectoryT").get(0).asDouble();
    assertEquals(t0, -2.0 * loss, 1e-9 * Math.abs(t0));
    assertEquals(fit.iterations() + 1, meta.get("trajectoryT").size());
    assertEquals(fit.testStatistic(), meta.get("t").asDouble(), 0.0);
    List<Double> seconds = new ObjectMapper().convertValue(meta.get("trajectorySeconds"),
        new com.fasterxml.jackson.core.type.TypeReference<List<Double>>() { });
    for (int i = 1; i < seconds.size(); i++) {
      assertTrue(seconds.get(i) >= seconds.get(i - 1));
    }
  }

  /** Dense layer W (out × in, row-major) then b at {@code off}, sigmoid or linear. */
  private static double[] layer(double[] theta, int off, double[] in, int out, boolean sigmoid) {
    double[] z = new double[out];
    for (int j = 0; j < out; j++) {
      double s = theta[off + out * in.length + j];
      for (int k = 0; k < in.length; k++) {
        s += theta[off + j * in.length + k] * in[k];
      }
      z[j] = sigmoid ? 1.0 / (1.0 + Math.exp(-s)) : s;
    }
    return z;
  }
}
