package triage.core.ratio;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Writes a benchmark case exactly as this engine's loss sees it, so that the same fit can be run
 * in a general deep-learning framework side by side (script {@code bench/framework/fit_torch.py}).
 *
 * <p>Per case {@code NAME}: {@code NAME.f64}, little-endian doubles: the standardised features
 * feature-major (d × m, m = reference + observed events, reference first), then the per-event
 * coefficients A (m) and B (m) of the extended loss L = Σ A (e^f − 1) − Σ B f (see {@link Batch}),
 * then the starting parameters θ_0 (P, layout of {@link Architecture}); {@code NAME.json}: the
 * sizes, the network, the clip, this engine's fit settings and result, and its trajectory
 * (seconds since the fit call, t) per iteration.
 */
final class FrameworkExport {
  private FrameworkExport() {
  }

  /** Records (seconds since construction, t = −2 loss) at every iteration of the first start. */
  static final class Trajectory implements TrainingListener {
    /** Construction time. */
    private final long startNanos = System.nanoTime();
    /** Seconds per recorded iteration. */
    private final List<Double> seconds = new ArrayList<>();
    /** t per recorded iteration. */
    private final List<Double> t = new ArrayList<>();

    @Override
    public void onIteration(int start, int iteration, double loss, double projectedGradientNorm,
                double[] parameters) {
      if (start == 0) {
        seconds.add((System.nanoTime() - startNanos) * 1e-9);
        t.add(-2.0 * loss);
      }
    }
  }

  static void write(Path dir, String name, TrainingData data, FitSettings settings, FitResult result,
           Trajectory trajectory) throws IOException {
    if (settings.loss() != LossKind.EXTENDED_LIKELIHOOD) {
      // the trajectory's t is −2 × the training loss, which is t only for the extended loss
      throw new IllegalArgumentException("the framework export is for the extended loss only, not " + settings.loss());
    }
    Files.createDirectories(dir);
    Architecture arch = new Architecture(data.features(), settings.hiddenWidths(),
        settings.activation());
    RatioTrainer.Problem problem = RatioTrainer.Problem.build(data, arch,
        LossKind.EXTENDED_LIKELIHOOD);
    Batch b = problem.training();
    int d = data.features();
    int m = data.referenceCount() + data.observedCount();
    double[] theta0 = RatioTrainer.initialParameters(arch, SplitMix64.derive(settings.seed(), 0),
        settings.clip());
    ByteBuffer out = ByteBuffer.allocate(8 * (d * m + 2 * m + theta0.length))
        .order(ByteOrder.LITTLE_ENDIAN);
    for (int k = 0; k < d; k++) {
      for (int e = 0; e < m; e++) {
        out.putDouble(b.x[k * b.n + e]);
      }
    }
    for (int e = 0; e < m; e++) {
      out.putDouble(b.coefA[e]);
    }
    for (int e = 0; e < m; e++) {
      out.putDouble(b.coefB[e]);
    }
    for (double v : theta0) {
      out.putDouble(v);
    }
    Files.write(dir.resolve(name + ".f64"), out.array());
    Map<String, Object> meta = new LinkedHashMap<>();
    meta.put("case", name);
    meta.put("features", d);
    meta.put("referenceEvents", data.referenceCount());
    meta.put("observedEvents", data.observedCount());
    meta.put("hiddenWidths", settings.hiddenWidths());
    meta.put("activation", settings.activation().name());
    meta.put("parameters", arch.parameterCount());
    meta.put("clip", settings.clip());
    meta.put("threads", settings.threads());
    meta.put("optimiser", settings.optimiser().name());
    meta.put("stoppingRule", settings.stoppingRule());
    meta.put("kernel", result.summary().kernel());
    meta.put("t", result.testStatistic());
    meta.put("seconds", result.elapsedSeconds());
    meta.put("iterations", result.iterations());
    meta.put("evaluations", result.lossEvaluations());
    meta.put("converged", result.converged());
    meta.put("trajectorySeconds", trajectory.seconds);
    meta.put("trajectoryT", trajectory.t);
    new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT)
        .writeValue(dir.resolve(name + ".json").toFile(), meta);
  }
}
