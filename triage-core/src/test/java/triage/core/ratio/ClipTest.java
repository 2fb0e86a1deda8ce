package triage.core.ratio;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * (d) No parameter ever leaves [−C, C]: checked after every iteration through the listener, at
 * every point the optimiser evaluates (a wrapping objective), and in the final model. A small
 * clip (0.8) makes the box active.
 */
class ClipTest {
  private static final double C = 0.8;

  @ParameterizedTest
  @EnumSource(OptimiserKind.class)
  void everyIterateStaysInTheBox(OptimiserKind optimiser) {
    TrainingData data = SyntheticData.gaussianBump(new double[] {1.5, 0.0}, 0.25, 8000, 800, 80, 41L);
    AtomicInteger calls = new AtomicInteger();
    AtomicInteger atBound = new AtomicInteger();
    FitSettings s = FitSettings.defaults().withThreads(2).withClip(C).withOptimiser(optimiser)
        .withAdamEpochs(300).withAdamLearningRate(0.05)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(300));
    FitResult r = RatioTrainer.fit(data, s, (start, it, loss, pg, theta) -> {
      calls.incrementAndGet();
      for (double v : theta) {
        assertTrue(Math.abs(v) <= C, "parameter " + v + " outside the box at iteration " + it);
        if (Math.abs(v) == C) {
          atBound.incrementAndGet();
        }
      }
    });
    assertTrue(calls.get() >= r.iterations());
    assertTrue(atBound.get() > 0, "the box should be active for this clip");
    for (double v : r.model().parameters()) {
      assertTrue(Math.abs(v) <= C);
    }
  }

  @Test
  void everyEvaluatedPointOfTheLineSearchIsInTheBox() {
    // min Σ (x_i − c_i)² with c outside the box: every trial point must be feasible and the
    // solution is the projection of c (analytic).
    double[] c = {3.0, -2.0, 0.25, 1.5, -0.5};
    DifferentiableFunction fn = new DifferentiableFunction() {
      @Override
      public int dimension() {
        return c.length;
      }

      @Override
      public double valueAndGradient(double[] x, double[] g) {
        double f = 0;
        for (int i = 0; i < x.length; i++) {
          assertTrue(Math.abs(x[i]) <= 1.0, "trial point outside the box");
          f += (x[i] - c[i]) * (x[i] - c[i]);
          g[i] = 2 * (x[i] - c[i]);
        }
        return f;
      }
    };
    OptimiserOutcome out = ProjectedLbfgs.minimise(fn, new double[5], 1.0, 5,
        StoppingRule.defaults(), IterationHook.NONE, new TrainingLog.Recorder(100));
    double[] expected = {1.0, -1.0, 0.25, 1.0, -0.5};
    for (int i = 0; i < 5; i++) {
      assertEquals(expected[i], out.parameters()[i], 1e-9);
    }
    assertTrue(out.converged());
  }
}
