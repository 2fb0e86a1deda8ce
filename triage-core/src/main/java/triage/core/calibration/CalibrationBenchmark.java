package triage.core.calibration;

import java.io.IOException;
import java.io.PrintStream;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import triage.core.ratio.FitBenchmark;
import triage.core.ratio.FitSettings;
import triage.core.ratio.OptimiserKind;

/**
 * Speed of a calibration (a program, not a test: nothing is asserted): null toys drawn from a
 * weighted N(0, I_d) reference of {@code nRef} events with N_exp = {@code nObs}, each fitted like
 * the observed data by default (d-5-5-1 sigmoid, the given clip, projected L-BFGS to the default
 * stopping rule), one after the other with {@code threads} threads per fit, as {@code triage calibrate}
 * runs them. Prints each toy's seconds, iterations, convergence and t, then the mean and median
 * seconds per toy and the wall time they project for 1,000 toys.
 */
public final class CalibrationBenchmark {
  private CalibrationBenchmark() {
  }

  /** Runs {@code toys} null toys and prints the figures to {@code out}. */
  public static void run(PrintStream out, int threads, int nRef, int nObs, int d, int toys, double clip,
      OptimiserKind optimiser) throws IOException {
    double[][] ref = FitBenchmark.gaussianReference(d, nRef, 7L);
    List<String> names = new ArrayList<>();
    for (int k = 0; k < d; k++) {
      names.add("x" + k);
    }
    FitSettings settings = FitSettings.defaults().withThreads(threads).withClip(clip).withOptimiser(optimiser);
    out.printf(Locale.ROOT, "CalibrationBenchmark: %dD, reference %d, N_exp %d, network %s, clip %.1f, %s, "
        + "threads %d, %d toys%n", d, nRef, nObs, settings.hiddenWidths(), settings.clip(), settings.optimiser(),
        threads, toys);
    long[] indices = new long[toys];
    for (int k = 0; k < toys; k++) {
      indices[k] = k;
    }
    long t0 = System.nanoTime();
    List<ToyLog.Entry> done = Calibration.run(names, ref[0], ref[1], nObs, settings, 1L, indices,
        e -> out.printf(Locale.ROOT, "  toy %d: %d observed, %.2f s, %d iterations, converged=%s, t = %.3f%n",
            e.toy(), e.events(), e.seconds(), e.iterations(), e.converged(), e.t()));
    double wall = (System.nanoTime() - t0) * 1e-9;
    double[] seconds = done.stream().mapToDouble(ToyLog.Entry::seconds).sorted().toArray();
    double mean = Arrays.stream(seconds).average().orElse(Double.NaN);
    double median = seconds.length % 2 == 1 ? seconds[seconds.length / 2]
        : 0.5 * (seconds[seconds.length / 2 - 1] + seconds[seconds.length / 2]);
    out.printf(Locale.ROOT, "  wall %.1f s for %d toys: mean %.2f s, median %.2f s per toy; 1,000 toys project to "
        + "%.0f s (%.1f min) at the mean (target at 5D, 200,000 and 2,000: 600 s)%n",
        wall, toys, mean, median, 1000 * mean, 1000 * mean / 60);
  }
}
